#!/usr/bin/python3
"""gen_schema.py COLUMNS EVENTS SOURCES OUT [LATE_EVERY] - writes a generated schema for
the benchmarks (SPEC section 8): a bicycle-rental scheme predicting, when a
bike is unlocked, whether it will come back damaged.  EVENTS events form a
chain with bounded lags; the moment is the middle one.  SOURCES sources, one
in ten external with full provenance.  COLUMNS columns, most known at an
event at least 30 events before the moment (so clearly available whatever
the lags and latencies); every tenth derived from two earlier columns, every
seventh joined as of an event, every fiftieth a windowed aggregate, and one
in LATE_EVERY (default 1,000; SPEC §8's measure uses 10) known after the
moment, so the check has findings to report, as a real schema under review
would.
Deterministic: the same arguments give the same bytes."""
import random
import sys


def main():
    n_cols, n_events, n_sources = (int(a) for a in sys.argv[1:4])
    out = sys.argv[4]
    late_every = int(sys.argv[5]) if len(sys.argv) > 5 else 1000
    rnd = random.Random(20261201)
    moment = n_events // 2
    w = []
    w.append("knowable: 1\n")
    w.append("dataset: rental_damage_%d\n" % n_cols)
    w.append("description: generated benchmark schema, %d columns\n" % n_cols)
    w.append("prediction:\n  moment: ev_%03d\n  target: returned_damaged\n  entity: rider_id\n" % moment)
    w.append("events:\n  ev_000: {}\n")
    for i in range(1, n_events):
        w.append("  ev_%03d:\n    after: {ev_%03d: [PT1M, PT%dM]}\n" % (i, i - 1, 5 + i % 55))
    w.append("sources:\n")
    for s in range(n_sources):
        if s % 10 == 9:
            w.append("  src_%02d:\n    kind: external\n    provider: Weather Office %d\n"
                     "    license: CC-BY-4.0\n    retrieved: 2026-05-01\n    point_in_time: true\n"
                     "    latency: PT%dM\n" % (s, s, 5 + s % 20))
        else:
            w.append("  src_%02d:\n    kind: internal\n    latency: PT%dM\n    history: append\n" % (s, s % 30))
    w.append("columns:\n")
    w.append("  rider_id: {role: identifier}\n")
    w.append("  returned_damaged:\n    role: target\n    type: boolean\n    known: ev_%03d\n    source: src_00\n"
             % (n_events - 1))
    types = ("number", "category", "boolean", "number")
    for c in range(n_cols - 2):
        name = "col_%06d" % c
        src = "src_%02d" % rnd.randrange(n_sources)
        if c % late_every == late_every - 2:
            ev = rnd.randrange(moment + 1, n_events)
        else:
            ev = rnd.randrange(0, moment - 30)
        if c % 10 == 9 and c > 20:
            a, b = rnd.randrange(0, c - 10), rnd.randrange(0, c - 10)
            w.append("  %s:\n    type: number\n    derived_from: [col_%06d, col_%06d]\n" % (name, a, b))
        elif c % 7 == 6:
            w.append("  %s:\n    type: %s\n    known: ev_%03d\n    source: %s\n    join: {key: rider_id, as_of: ev_%03d}\n"
                     % (name, types[c % 4], ev, src, min(ev, moment)))
        elif c % 50 == 25:
            w.append("  %s:\n    type: number\n    source: %s\n    window: {anchor: ev_%03d, from: -P7D, to: PT0S}\n"
                     % (name, src, min(ev, moment - 31)))
        else:
            w.append("  %s:\n    type: %s\n    known: ev_%03d\n    source: %s\n" % (name, types[c % 4], ev, src))
    with open(out, "w") as f:
        f.write("".join(w))


if __name__ == "__main__":
    main()
