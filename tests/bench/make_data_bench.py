#!/usr/bin/env python3
"""Writes the data benchmark's inputs (SPEC §8): a seeded, invented 50-column
CSV of parcels of about SIZE_MB megabytes and the schema that describes it.

  make_data_bench.py OUT.csv OUT.knowable.yaml [SIZE_MB]   (default 200)

Columns: an identifier with named groups, the sender (entity), the moment
column, the split, a boolean target, a booking timestamp, 30 numbers (some
with missing values), 10 categories (two of them quasi-identifiers) and 3
booleans.  Needs numpy (exit 77 without it)."""
import sys

try:
    import numpy as np
except ImportError:
    print("numpy is missing", file=sys.stderr)
    sys.exit(77)

N_NUM, N_CAT, N_FLAG = 30, 10, 3
CHUNK = 20000


def schema_text():
    cols = [
        "  parcel_ref:\n    role: identifier\n    format: '^(?<depot>[A-Z]{3})-(?<service>EXP|STD|ECO)-\\d{7}$'\n",
        "  sender_id:\n    role: identifier\n",
        "  dispatched_at:\n    role: timestamp\n    type: timestamp\n    known: dispatch\n    source: ops\n",
        "  split:\n    role: split\n    type: category\n",
        "  arrived_late:\n    role: target\n    type: boolean\n    known: delivered\n    source: ops\n",
        "  booked_at:\n    type: timestamp\n    known: booked\n    source: ops\n",
    ]
    for i in range(N_NUM):
        cols.append("  num_%02d:\n    type: number\n    known: booked\n    source: ops\n" % (i + 1))
    for i in range(N_CAT):
        qi = "    quasi_identifier: true\n" if i < 2 else ""
        cols.append("  cat_%02d:\n    type: category\n    known: booked\n    source: ops\n%s" % (i + 1, qi))
    for i in range(N_FLAG):
        cols.append("  flag_%02d:\n    type: boolean\n    known: booked\n    source: ops\n" % (i + 1))
    return ("# Benchmark schema written by tests/bench/make_data_bench.py.\n"
            "knowable: 1\ndataset: parcel_bench\n"
            "prediction:\n  moment: dispatch\n  target: arrived_late\n  entity: sender_id\n"
            "  moment_column: dispatched_at\n"
            "events:\n  booked: {}\n  dispatch:\n    after: {booked: [PT1H, P3D]}\n"
            "  delivered:\n    after: {dispatch: [PT2H, P10D]}\n"
            "sources:\n  ops:\n    kind: internal\n"
            "columns:\n" + "".join(cols) +
            "split:\n  method: group\n  column: split\n  group_column: sender_id\n")


def header():
    return (["parcel_ref", "sender_id", "dispatched_at", "split", "arrived_late", "booked_at"] +
            ["num_%02d" % (i + 1) for i in range(N_NUM)] +
            ["cat_%02d" % (i + 1) for i in range(N_CAT)] +
            ["flag_%02d" % (i + 1) for i in range(N_FLAG)])


def pools(rng):
    """Formatted values drawn once; rows pick from them (fast to write, and
    still 4,096 distinct values per number column)."""
    num = []
    for i in range(N_NUM):
        v = np.sort(rng.normal(50 + i, 10 + i, 4096))
        num.append(np.array(["%.2f" % a for a in v], dtype=object))
    cat = [np.array(["c%d_%d" % (i, k) for k in range(3 + 5 * i)], dtype=object) for i in range(N_CAT)]
    return num, cat


def chunk(rng, start, num_pools, cat_pools):
    n = CHUNK
    depots = np.array(["LHR", "MAN", "BHX", "GLA", "LDS", "BRS"], dtype=object)
    services = np.array(["EXP", "STD", "ECO"], dtype=object)
    ref = depots[rng.integers(0, 6, n)] + "-" + services[rng.integers(0, 3, n)] + "-" + \
        np.array(["%07d" % k for k in range(start, start + n)], dtype=object)
    sender_num = rng.integers(10000, 60000, n)
    sender = np.array(["S%d" % k for k in sender_num], dtype=object)
    t0 = np.datetime64("2025-01-01T00:00:00")
    dispatched = t0 + rng.integers(0, 540 * 86400, n).astype("timedelta64[s]")
    booked = dispatched - rng.integers(3600, 3 * 86400, n).astype("timedelta64[s]")
    split = np.where(sender_num % 5 == 0, "test", "train").astype(object)
    late = rng.random(n) < 0.25
    cols = [ref, sender, dispatched.astype(str).astype(object) + "Z", split,
            np.where(late, "true", "false").astype(object), booked.astype(str).astype(object) + "Z"]
    for i in range(N_NUM):
        # Late parcels sit a little higher: a weak, honest signal.
        idx = np.clip(rng.integers(0, 4096, n) + late * 200, 0, 4095)
        v = num_pools[i][idx]
        if i % 5 == 0:
            v = np.where(rng.random(n) < 0.05, "", v)
        cols.append(v)
    for i in range(N_CAT):
        cols.append(cat_pools[i][rng.integers(0, len(cat_pools[i]), n)])
    for i in range(N_FLAG):
        cols.append(np.where(rng.random(n) < 0.5, "true", "false").astype(object))
    lists = [c.tolist() for c in cols]
    return "\n".join(",".join(r) for r in zip(*lists)) + "\n"


def main():
    out_csv, out_schema = sys.argv[1], sys.argv[2]
    size = float(sys.argv[3]) if len(sys.argv) > 3 else 200.0
    with open(out_schema, "w") as f:
        f.write(schema_text())
    rng = np.random.default_rng(20261201)
    num_pools, cat_pools = pools(rng)
    written, start = 0, 0
    with open(out_csv, "w") as f:
        f.write(",".join(header()) + "\n")
        while written < size * 1e6:
            text = chunk(rng, start, num_pools, cat_pools)
            f.write(text)
            written += len(text)
            start += CHUNK
    print("%s: %.1f MB, %d rows" % (out_csv, written / 1e6, start))


if __name__ == "__main__":
    main()
