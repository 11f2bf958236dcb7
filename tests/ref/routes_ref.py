#!/usr/bin/python3
"""Cross-check of first_of events and known.one_of columns (SPEC §3.3,
§3.5) through tests/ref/routes_probe, on seeded random networks.

The reference computes every ordinary event's range relative to the
moment with networkx.single_source_bellman_ford_path_length on the Simple
Temporal Network (Dechter, Meiri & Pearl, 1991: t(b) - t(a) in [lo, hi] is
a->b of weight hi and b->a of weight -lo; reference: networkx), and again
with scipy.sparse.csgraph.bellman_ford when SciPy is present (reference:
SciPy), then applies the rules of the specification independently:
  - a first_of event: [min of the members' lower bounds, min of their
    upper bounds] (SPEC §3.3);
  - a column known at one_of several events: the hull, [min of the lower
    bounds, max of the upper bounds] (SPEC §3.5).
Networks that networkx.negative_edge_cycle finds contradictory are
compared by verdict only.
Usage: routes_ref.py PROBE [N_NETWORKS]; exit 77 when networkx is missing.
"""
import random
import subprocess
import sys

try:
    import networkx as nx
except ImportError:  # pragma: no cover
    print("networkx is missing: skipped")
    sys.exit(77)
try:
    import numpy as np
    from scipy.sparse.csgraph import bellman_ford as scipy_bellman_ford
    from scipy.sparse.csgraph import csgraph_from_dense
    HAVE_SCIPY = True
except ImportError:  # pragma: no cover
    HAVE_SCIPY = False

MINUTE = 60 * 1000000
INF = float("inf")


def generate(rng):
    """A forward-running process of ordinary events (always consistent:
    every lag's lower bound is at most its upper bound and edges run from
    lower to higher index), plus first_of events and one_of columns over
    the ordinary ones."""
    n_plain = rng.randint(2, 25)
    cons = []
    for b in range(1, n_plain):
        for _ in range(rng.randint(0, 2)):
            a = rng.randrange(b)
            lo = rng.randint(-60, 600) * MINUTE
            hi = INF if rng.random() < 0.15 else lo + rng.randint(0, 5000) * MINUTE
            cons.append((a, b, lo, hi))
    n_first = rng.randint(0, 4)
    firsts = []
    for k in range(n_first):
        members = rng.sample(range(n_plain), rng.randint(1, min(4, n_plain)))
        firsts.append((n_plain + k, members))
    cols = []
    for _ in range(rng.randint(0, 5)):
        pool = list(range(n_plain)) + [f for f, _ in firsts]
        cols.append(rng.sample(pool, rng.randint(1, min(4, len(pool)))))
    moment = rng.randrange(n_plain)
    return n_plain + n_first, n_plain, cons, firsts, cols, moment


def reference_bounds(n, cons, moment):
    g = nx.DiGraph()
    g.add_nodes_from(range(n))

    def add(u, v, w):
        if g.has_edge(u, v):
            g[u][v]["weight"] = min(g[u][v]["weight"], w)
        else:
            g.add_edge(u, v, weight=w)
    for a, b, lo, hi in cons:
        if hi != INF:
            add(a, b, hi)
        add(b, a, -lo)
    up = nx.single_source_bellman_ford_path_length(g, moment)
    down = nx.single_source_bellman_ford_path_length(g.reverse(copy=True), moment)
    out = []
    for x in range(n):
        out.append((-down[x] if x in down else -INF, up[x] if x in up else INF))
    if HAVE_SCIPY:
        # the same bounds again with SciPy (zero-weight edges kept: the
        # dense matrix's non-edges are infinite, not zero)
        m = np.full((n, n), np.inf)
        for u, v, d in g.edges(data=True):
            m[u, v] = d["weight"]
        fwd = scipy_bellman_ford(csgraph_from_dense(m, null_value=np.inf), indices=moment)
        back = scipy_bellman_ford(csgraph_from_dense(m.T.copy(), null_value=np.inf), indices=moment)
        for x in range(n):
            if (-back[x], fwd[x]) != out[x]:
                raise AssertionError(f"SciPy {(-back[x], fwd[x])} and networkx {out[x]} disagree at {x}")
    return out


def contradictory(n, cons):
    g = nx.DiGraph()
    g.add_nodes_from(range(n))
    for a, b, lo, hi in cons:
        for u, v, w in ((a, b, hi), (b, a, -lo)):
            if w == INF:
                continue
            if not g.has_edge(u, v) or g[u][v]["weight"] > w:
                g.add_edge(u, v, weight=w)
    return nx.negative_edge_cycle(g)


def fmt(v):
    return "inf" if v == INF else str(int(v))


def parse(v):
    return INF if v == "inf" else (-INF if v == "-inf" else int(v))


def main():
    probe = sys.argv[1]
    count = int(sys.argv[2]) if len(sys.argv) > 2 else 300
    rng = random.Random(20261202)
    failures = skipped = 0
    for it in range(count):
        n, n_plain, cons, firsts, cols, moment = generate(rng)
        lines = [f"{n} {len(cons)} {moment} {len(firsts)} {len(cols)}"]
        lines += [f"{a} {b} {lo} {fmt(hi)}" for a, b, lo, hi in cons]
        lines += [f"{e} {len(ms)} " + " ".join(map(str, ms)) for e, ms in firsts]
        lines += [f"{len(ms)} " + " ".join(map(str, ms)) for ms in cols]
        p = subprocess.run([probe], input="\n".join(lines) + "\n", capture_output=True, text=True)
        out = p.stdout.split("\n")
        if contradictory(n_plain, cons):
            # two routes between the same events can disagree; the solver
            # must then say so (reference: networkx.negative_edge_cycle)
            if out[0] != "contradictory":
                print(f"network {it}: networkx finds a negative cycle, knowable said {out[0]!r}")
                failures += 1
            skipped += 1
            continue
        if p.returncode != 0 or out[0] != "consistent":
            print(f"network {it}: probe said {out[0]!r} (exit {p.returncode}) {p.stderr}")
            failures += 1
            continue
        ref = reference_bounds(n_plain, cons, moment)
        want = list(ref)
        for e, ms in firsts:  # SPEC §3.3
            want.append((min(ref[x][0] for x in ms), min(ref[x][1] for x in ms)))
        for ms in cols:  # SPEC §3.5
            want.append((min(want[x][0] for x in ms), max(want[x][1] for x in ms)))
        got = [tuple(parse(v) for v in line.split()) for line in out[1:1 + n + len(cols)]]
        for i, (w, g) in enumerate(zip(want, got)):
            if w != g:
                kind = "event" if i < n else "column"
                print(f"network {it}: {kind} {i if i < n else i - n}: reference {w}, knowable {g}")
                failures += 1
    print(f"{count} networks checked ({skipped} contradictory, compared by verdict only), "
          f"{failures} disagreements")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
