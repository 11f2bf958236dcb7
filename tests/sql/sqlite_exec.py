#!/usr/bin/python3
"""tests/sql/sqlite_exec.py KNOWABLE - runs the queries of `knowable sql
--dialect sqlite` for the bakery schema with hostile column names
(hostile-names-sqlite.knowable.yaml) on a real SQLite engine (Python's
sqlite3 module) holding invented rows, and checks that

- every statement runs (the quoting holds: no name is spliced), the table
  is still there with all its rows afterwards, and the session refuses a
  write (PRAGMA query_only);
- the aggregated rows equal the same figures counted here in Python over
  the rows (exact counts: rows, rows per target class, contingency tables,
  split overlap of feature rows and of entities with the least shared
  entity, quasi-identifier group sizes, missing rows per class, distinct
  values, and the engine's Mann-Whitney rank sums against a count over
  every pair of rows).

Exit 0 pass, 1 fail, 77 skipped (no sqlite3 module)."""
import collections
import os
import subprocess
import sys

try:
    import sqlite3
except ImportError:
    print("skipped: Python's sqlite3 module is missing")
    sys.exit(77)

knowable = os.path.abspath(sys.argv[1])
here = os.path.dirname(os.path.abspath(__file__))
schema = "hostile-names-sqlite.knowable.yaml"
script = subprocess.run([knowable, "sql", "--table", "bakery_days", "--dialect", "sqlite", "--", schema],
                        cwd=here, capture_output=True, text=True)
if script.returncode != 0:
    print("knowable sql failed:", script.returncode, script.stderr)
    sys.exit(1)

TARGET = 'sold_out"; DROP TABLE ovens; --'
SHOP = "shop`id"
SPLIT = "it's the split"
ROLLS = "Brötchen–Menge ☕"
FLOUR = "flour\\kg"
OVEN = "oven\x1b[31mred"
cols = [TARGET, SHOP, SPLIT, ROLLS, FLOUR, OVEN]

# Invented rows of a bakery chain, deterministic: shops 1..9, some shops on
# both sides of the split, repeated feature rows, missing markers.
rows = []
for i in range(240):
    shop = "S%02d" % (i % 9) if i % 17 else "NA"
    side = ["train", "Test ", "TRAINING", "holdout", "fold3"][i % 5] if i % 7 else None
    rolls = (i * 7) % 11 if i % 13 else None
    flour = float((i * 3) % 5) / 2
    sold = "yes" if (i * 5) % 3 == 0 else ("no" if i % 19 else "")
    rows.append((sold, shop, side, rolls, flour, "red" if i % 2 else "blue"))

db = sqlite3.connect(":memory:")
q = lambda n: '"' + n.replace('"', '""') + '"'
db.execute("CREATE TABLE ovens (x)")
db.execute("CREATE TABLE bakery_days (%s)" % ", ".join(q(c) for c in cols))
db.executemany("INSERT INTO bakery_days VALUES (?, ?, ?, ?, ?, ?)", rows)
db.commit()

# Statements, split where sqlite3 says one is complete (names hold ';').
stmts, buf, comments = [], "", []
for line in script.stdout.splitlines(keepends=True):
    if not buf and not line.strip():
        continue
    if not buf and line.startswith("--"):
        comments.append(line.strip())
        continue
    buf += line
    if sqlite3.complete_statement(buf):
        stmts.append((comments, buf.strip()))
        buf, comments = "", []
fails = 0


def check(what, got, want):
    global fails
    if got != want:
        print("FAIL:", what, "got", got, "expected", want)
        fails += 1
    else:
        print("ok:", what)


results = []
for c, s in stmts:
    # the rank sum is printed with placeholders for the target's values
    s = s.replace("':positive'", "'yes'").replace("':negative'", "'no'")
    try:
        results.append((c, s, db.execute(s).fetchall()))
    except sqlite3.Error as e:
        print("FAIL: statement did not run:", e, "\n", s)
        fails += 1
check("statements run", len(results), len(stmts))
check("the table ovens survives", db.execute("SELECT COUNT(*) FROM ovens").fetchall(), [(0,)])
check("bakery_days keeps its rows", db.execute("SELECT COUNT(*) FROM bakery_days").fetchall(), [(len(rows),)])
try:
    db.execute("INSERT INTO ovens VALUES (1)")
    check("a write is refused after PRAGMA query_only", "written", "refused")
except sqlite3.Error:
    check("a write is refused after PRAGMA query_only", "refused", "refused")

missing = {None, "", "NA", "N/A", "NaN", "null"}
train_w = {"train", "training"}
test_w = {"test", "testing", "holdout", "validation", "valid", "val", "eval"}


def side(v):
    if v is None:
        return 0
    w = v.strip(" ").lower()
    return 1 if w in train_w else 2 if w in test_w else 0


def overlap(keyf, skip=lambda r: False):
    groups = collections.defaultdict(lambda: [0, 0])
    for r in rows:
        if skip(r):
            continue
        s = side(r[2])
        g = groups[keyf(r)]
        if s == 1:
            g[0] += 1
        elif s == 2:
            g[1] += 1
    both = [g for g in groups.values() if g[0] and g[1]]
    return (sum(g[0] for g in groups.values()), sum(g[1] for g in groups.values()), len(both),
            sum(g[0] for g in both), sum(g[1] for g in both))


def is_missing(v):
    return v is None or str(v).strip(" ").lower() in {"", "na", "n/a", "nan", "null"}


def rank_sum(i):
    """Twice the Mann-Whitney U of column i with the target 'yes' against
    'no', by comparing every pair (the definition; ties count one half,
    common practice), rows with a missing value or target left out; then
    the rows of each class whose value is missing (None: no such row, the
    SQL sum of nothing)."""
    kept = [(r[i], r[0]) for r in rows if not is_missing(r[i]) and not is_missing(r[0])]
    pos = [v for v, y in kept if y == "yes"]
    neg = [v for v, y in kept if y == "no"]
    missing = [r[0] for r in rows if is_missing(r[i])]
    return [(sum(2 if p > n else 1 if p == n else 0 for p in pos for n in neg), len(pos), len(neg),
             missing.count("yes") or None, missing.count("no") or None)]


def column_of(tag):
    return cols.index(ROLLS) if "Brötchen" in tag else cols.index(FLOUR) if "flour" in tag else cols.index(SHOP)


checked = 0
for c, s, res in results:
    tag = " ".join(c)
    checked += 1
    if s.startswith("PRAGMA"):
        check("the session setting returns no rows", res, [])
    elif "WHERE 1 = 0" in s:
        check("the column names query returns no rows", res, [])
    elif s.startswith("SELECT COUNT(*) AS n_rows"):
        check("rows", res, [(len(rows),)])
    elif s.startswith("SELECT COUNT(*) AS n_sample"):
        # the statistics' sample (printed for p = 0.5): the same rows every
        # time, about half of them (binomial: 3 standard deviations of 240
        # draws are 23 rows), spread over the whole table
        again = db.execute(s).fetchall()
        check("the sample is the same rows when drawn again", again, res)
        n = res[0][0]
        check("the sample holds about half the rows", 0.4 * len(rows) <= n <= 0.6 * len(rows), True)
        spread = db.execute(s.replace("COUNT(*) AS n_sample", "MIN(knowable_row), MAX(knowable_row)", 1)).fetchall()
        check("the sample reaches both ends of the table", spread[0][0] <= 10 and spread[0][1] > len(rows) - 10, True)
    elif "[rows-shared-across-split]" in tag:
        # and the least entity of a test row in a group with both sides
        groups = collections.defaultdict(lambda: [set(), []])
        for r in rows:
            g = groups[(r[3], r[4])]
            g[0].add(side(r[2]))
            if side(r[2]) == 2 and r[1] is not None:
                g[1].append(r[1])
        first = min((min(g[1]) for g in groups.values() if {1, 2} <= g[0] and g[1]), default=None)
        check("rows-shared-across-split", tuple(res[0]), overlap(lambda r: (r[3], r[4])) + (first,))
    elif "[entity-in-both-splits]" in tag:
        shared = collections.defaultdict(set)
        for r in rows:
            if r[1] not in missing and side(r[2]):
                shared[r[1]].add(side(r[2]))
        first = min(k for k, v in shared.items() if len(v) == 2)
        check("entity-in-both-splits", tuple(res[0]), overlap(lambda r: r[1], lambda r: r[1] in missing) + (first,))
    elif "[lone-feature-separates]" in tag and "rank sum" in tag:
        check("rank sum of %r" % cols[column_of(tag)], res, rank_sum(column_of(tag)))
    elif "[missingness-predicts]" in tag:
        i = column_of(tag)
        want = collections.defaultdict(lambda: [0, 0])
        for r in rows:
            want[r[0]][0] += is_missing(r[i])
            want[r[0]][1] += 1
        check("missing rows of %r per target value" % cols[i], sorted(res, key=repr),
              sorted(((t, m, n) for t, (m, n) in want.items()), key=repr))
    elif "[value-mismatch]" in tag and "streamed" in tag:
        i = column_of(tag)
        check("distinct values of %r" % cols[i], sorted(res, key=repr),
              sorted(collections.Counter(r[i] for r in rows).items(), key=repr))
    elif "[small-quasi-identifier-groups]" in tag:
        sizes = collections.Counter(collections.Counter((r[3], r[4]) for r in rows).values())
        check("quasi-identifier group sizes", res, sorted(sizes.items()))
    elif "the target" in tag:
        check("rows per target class", sorted(res, key=repr),
              sorted(collections.Counter(r[0] for r in rows).items(), key=repr))
    elif "by target class" in tag:
        i = column_of(tag)
        want = collections.Counter((r[i], r[0]) for r in rows)
        check("contingency of %r and the target" % cols[i], sorted((((v, t), n) for v, t, n in res), key=repr),
              sorted(want.items(), key=repr))
    else:
        print("FAIL: a statement this test does not know:", tag)
        checked -= 1
check("statements whose figures were compared", checked, len(results))
if fails:
    print(fails, "failed")
    sys.exit(1)
print("all", len(results), "statements ran; figures equal")
