#!/bin/sh
# tests/sql/engines.sh KNOWABLE ENGINE - the queries of `knowable sql` and
# the read-only session of `check --data odbc:...` on a real server:
# ENGINE is postgresql (Debian's postgresql and odbc-postgresql) or mariadb
# (mariadb-server and odbc-mariadb).  .ci/run starts the servers and makes
# the database `knowable` with two users: knowable_owner (loads the rows)
# and knowable_reader (may only read).  Without a running server the test
# is skipped (exit 77) and says why.
#
# Checked: the bakery table with hostile column names is loaded; the whole
# script of `knowable sql --dialect D` runs as the reader and stops at no
# statement; the owner, who may write, is refused a write after the
# script's session statements (the session is read-only); the
# table ovens, named in a column's name, still exists with its row; `check
# --data 'odbc:Driver=...'` runs the data checks through the engine's ODBC
# driver, its password never printed.  Exit 0 pass, 1 fail, 77 skipped.
set -u
knowable=$1
engine=$2
case $knowable in /*) ;; *) knowable=$(pwd)/$knowable ;; esac
here=$(cd "$(dirname "$0")" && pwd)
tmp=$(mktemp -d "${TMPDIR:-/tmp}/kn-engine.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT
pw_owner=owner-rye-42
pw_reader=reader-sourdough-7
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }

# The bakery table: the columns of hostile-names.knowable.yaml as quoted
# identifiers of the engine (q the quote character, doubled inside), and a
# table ovens with one row.
load_sql() {
    /usr/bin/python3 - "$1" <<'PY'
import sys
q = sys.argv[1]
names = ['sold_out"; DROP TABLE ovens; --', "shop`id", "it's the split", "Brötchen–Menge ☕", "flour\\kg"]
types = ["TEXT", "TEXT", "TEXT", "INTEGER", "DOUBLE PRECISION"]
cols = ", ".join(q + n.replace(q, q + q) + q + " " + t for n, t in zip(names, types))
print("DROP TABLE IF EXISTS bakery_days;\nDROP TABLE IF EXISTS ovens;\nCREATE TABLE ovens (x INTEGER);")
print("INSERT INTO ovens VALUES (1);\nCREATE TABLE bakery_days (%s);" % cols)
print("INSERT INTO bakery_days VALUES ('yes', 'S01', 'train', 3, 1.5), ('no', 'S01', 'test', 3, 1.5),")
print("  ('yes', 'S02', 'train', 4, 2.0), ('no', 'NA', 'holdout', NULL, 0.5), ('', 'S03', 'fold3', 5, 1.0);")
PY
}

case $engine in
postgresql)
    command -v psql >/dev/null && command -v pg_isready >/dev/null || { echo "skipped: no PostgreSQL client (Debian postgresql)"; exit 77; }
    pg_isready -q -h localhost || { echo "skipped: no PostgreSQL server on localhost (.ci/run starts one)"; exit 77; }
    export PGHOST=localhost PGDATABASE=knowable
    PGUSER=knowable_owner PGPASSWORD=$pw_owner psql -q -v ON_ERROR_STOP=1 -c 'SELECT 1' >/dev/null 2>&1 ||
        { echo "skipped: the database knowable or its users are missing (.ci/run makes them)"; exit 77; }
    load_sql '"' >"$tmp/load.sql"
    PGUSER=knowable_owner PGPASSWORD=$pw_owner psql -q -v ON_ERROR_STOP=1 -f "$tmp/load.sql" >"$tmp/load.out" 2>&1 ||
        { fail "cannot load the rows"; cat "$tmp/load.out"; }
    PGUSER=knowable_owner PGPASSWORD=$pw_owner psql -q -c 'GRANT SELECT ON bakery_days, ovens TO knowable_reader' >/dev/null
    reader() { PGUSER=knowable_reader PGPASSWORD=$pw_reader psql -q -At -v ON_ERROR_STOP=1 "$@"; }
    owner() { PGUSER=knowable_owner PGPASSWORD=$pw_owner psql -q -At -v ON_ERROR_STOP=1 "$@"; }
    dialect=postgresql
    driver='PostgreSQL Unicode'
    conn="Driver={$driver};Server=localhost;Database=knowable;UID=knowable_reader;PWD=$pw_reader"
    ;;
mariadb)
    command -v mariadb >/dev/null || { echo "skipped: no MariaDB client (Debian mariadb-server)"; exit 77; }
    mariadb -h 127.0.0.1 -u knowable_owner -p"$pw_owner" knowable -e 'SELECT 1' >/dev/null 2>&1 ||
        { echo "skipped: no MariaDB server on 127.0.0.1 with the database knowable (.ci/run starts one)"; exit 77; }
    load_sql '`' >"$tmp/load.sql"
    mariadb -h 127.0.0.1 -u knowable_owner -p"$pw_owner" knowable <"$tmp/load.sql" >"$tmp/load.out" 2>&1 ||
        { fail "cannot load the rows"; cat "$tmp/load.out"; }
    reader() { mariadb -h 127.0.0.1 -u knowable_reader -p"$pw_reader" knowable "$@"; }
    owner() { mariadb -h 127.0.0.1 -u knowable_owner -p"$pw_owner" knowable "$@"; }
    dialect=mysql
    driver='MariaDB Unicode'
    conn="Driver={$driver};Server=127.0.0.1;Database=knowable;UID=knowable_reader;PWD=$pw_reader"
    ;;
*)
    echo "usage: engines.sh KNOWABLE postgresql|mariadb"
    exit 1
    ;;
esac

cd "$here" || exit 1
"$knowable" sql --table bakery_days --dialect $dialect -- hostile-names.knowable.yaml >"$tmp/checks.sql" ||
    fail "knowable sql failed"
# The same with missing markers that hold quotes and backslashes.
"$knowable" sql --table bakery_days --dialect $dialect --rulebook odd-missing.rules.yaml -- hostile-literals.knowable.yaml \
    >>"$tmp/checks.sql" || fail "knowable sql --rulebook odd-missing.rules.yaml failed"
n=$(grep -c ';$' "$tmp/checks.sql")
if [ "$engine" = postgresql ]; then
    reader -f "$tmp/checks.sql" >"$tmp/out" 2>"$tmp/err" || { fail "the script stopped"; cat "$tmp/err"; }
    printf '%s\nINSERT INTO ovens VALUES (2);\n' "$(sed -n '1,/^SET statement_timeout/p' "$tmp/checks.sql")" >"$tmp/write.sql"
    owner -c 'INSERT INTO ovens VALUES (2); DELETE FROM ovens WHERE x = 2' >/dev/null || fail "the owner cannot write (the control)"
    if owner -f "$tmp/write.sql" >/dev/null 2>&1; then fail "a write was accepted after the session statements"; fi
    rows=$(reader -c 'SELECT COUNT(*) FROM ovens')
else
    reader <"$tmp/checks.sql" >"$tmp/out" 2>"$tmp/err" || { fail "the script stopped"; cat "$tmp/err"; }
    printf '%s\nINSERT INTO ovens VALUES (2);\n' "$(sed -n '1,/^SET SESSION max_statement_time/p' "$tmp/checks.sql")" >"$tmp/write.sql"
    owner -e 'INSERT INTO ovens VALUES (2); DELETE FROM ovens WHERE x = 2' || fail "the owner cannot write (the control)"
    if owner <"$tmp/write.sql" >/dev/null 2>&1; then fail "a write was accepted after the session statements"; fi
    rows=$(reader -N -e 'SELECT COUNT(*) FROM ovens')
fi
[ "$rows" = 1 ] || fail "the table ovens holds '$rows' rows, expected 1"
echo "$engine: $n statements ran as the reader; ovens intact"
if [ "$engine" = postgresql ]; then
    # The grouping settings the script changes are put back to the
    # session's own values, not to the server's defaults (RESET).
    grep -q "set_config('enable_hashagg'" "$tmp/checks.sql" && grep -q "set_config('work_mem'" "$tmp/checks.sql" ||
        fail "the script sets no grouping (the test below proves nothing)"
    { echo "SET work_mem = '3MB'; SET enable_hashagg = off;"; cat "$tmp/checks.sql"
      echo "SELECT 'after: ' || current_setting('work_mem') || ' ' || current_setting('enable_hashagg');"; } >"$tmp/settings.sql"
    after=$(reader -f "$tmp/settings.sql" 2>&1 | grep '^after: ')
    [ "$after" = "after: 3MB off" ] || fail "the session's settings after the script: '$after', expected 'after: 3MB off'"
fi

# The data checks through the engine's driver: the hostile names are
# quoted in every query (no statement fails), the findings point at the
# table, the password is never printed.
if "$knowable" check --help >/dev/null && odbcinst -q -d -n "$driver" >/dev/null 2>&1; then
    "$knowable" check --data "odbc:$conn" --table bakery_days -- hostile-names.knowable.yaml >"$tmp/c.out" 2>"$tmp/c.err"
    rc=$?
    cat "$tmp/c.err"
    if grep -q "built without" "$tmp/c.err"; then
        echo "knowable has no database support: the ODBC session is not tried"
    else
        [ "$rc" = 0 ] || [ "$rc" = 1 ] || fail "check --data odbc: exit $rc"
        grep -q "^odbc:Driver={$driver};.*PWD=\*\*\*/bakery_days: note: the schema declares a column 'oven" "$tmp/c.out" ||
            fail "no report on the table through ODBC"
        sed 's/^/    /' "$tmp/c.out" | grep "bakery_days" | head -5
        # A query the engine refuses: exit 2 and the driver's message on
        # one line (PostgreSQL's spans two), never an escaped line break.
        printf 'SELECT * FROM bakery_days; DELETE FROM ovens\n' >"$tmp/two.sql"
        "$knowable" check --data "odbc:$conn" --query "$tmp/two.sql" -- hostile-names.knowable.yaml >/dev/null 2>"$tmp/q.err"
        rc=$?
        sed 's/^/    /' "$tmp/q.err"
        [ "$rc" = 2 ] || fail "a query of two statements: exit $rc, expected 2"
        [ "$(wc -l <"$tmp/q.err")" = 1 ] && grep -q "SQLSTATE" "$tmp/q.err" ||
            fail "the driver's message is not one line with its SQLSTATE"
        if grep -qF '\n' "$tmp/q.err"; then fail "an escaped line break in the driver's message"; fi
    fi
    if grep -q "$pw_reader" "$tmp/c.out" "$tmp/c.err"; then fail "the password was printed"; fi
    if [ "$engine" = postgresql ] && ! grep -q "built without" "$tmp/c.err"; then
        # A feature column of a type without an extended hash (money): the
        # identical rows across the split are grouped by the columns' text
        # instead of hash_record_extended (which refuses it).
        owner -c "DROP TABLE IF EXISTS till_days;
            CREATE TABLE till_days (day_id TEXT, fold TEXT, takings MONEY, loaves INTEGER, sold_out BOOLEAN);
            INSERT INTO till_days VALUES ('D1', 'train', '12.50', 3, true), ('D2', 'test', '12.50', 3, false),
                ('D3', 'train', '7.00', 4, true), ('D4', 'test', '9.00', 4, false), ('D5', 'test', '12.50', 3, true);
            GRANT SELECT ON till_days TO knowable_reader" >/dev/null || fail "cannot make till_days"
        cat >"$tmp/till.knowable.yaml" <<'YAML'
knowable: 1
dataset: till_days
prediction: {moment: open, target: sold_out}
events:
  open: {}
  close: {after: {open: [PT8H, PT10H]}}
split: {method: random, column: fold}
columns:
  day_id: {role: identifier}
  fold: {role: split}
  sold_out: {role: target, type: boolean, known: close}
  takings: {known: open}
  loaves: {type: number, known: open}
YAML
        "$knowable" check --data "odbc:$conn" --table till_days -- "$tmp/till.knowable.yaml" >"$tmp/t.out" 2>"$tmp/t.err"
        rc=$?
        [ "$rc" -le 1 ] || { fail "check of a money column: exit $rc, expected 0 or 1"; cat "$tmp/t.err"; }
        grep -q "2 of 3 test rows repeat the feature values of a training row.*rows-shared-across-split" "$tmp/t.out" ||
            { fail "the rows shared across the split of till_days are not counted"; cat "$tmp/t.out"; }
    fi
    if [ "$engine" = postgresql ] && ! grep -q "built without" "$tmp/c.err"; then
        # A sample of 100,000 rows or more is drawn by whole pages
        # (TABLESAMPLE SYSTEM): of 300,000 invented loaves, --max-rows
        # 100000 gives about 100,000 rows (pages of about 150 rows: the
        # count varies by a few thousand), the same report twice, the
        # counted findings of the whole table, statistics near its own.
        owner -c "DROP TABLE IF EXISTS loaf_days;
            CREATE TABLE loaf_days AS SELECT i AS loaf_id, CASE WHEN i % 4 = 0 THEN 'test' ELSE 'train' END AS fold,
                (i * 37 % 1000) / 10.0 AS proof_minutes, (i * 7 % 13) AS oven, (i * 37 % 1000) > 700 AS burnt
            FROM generate_series(1, 300000) AS i;
            GRANT SELECT ON loaf_days TO knowable_reader" >/dev/null || fail "cannot make loaf_days"
        cat >"$tmp/loaf.knowable.yaml" <<'YAML'
knowable: 1
dataset: loaf_days
prediction: {moment: bake, target: burnt}
events:
  bake: {}
  cool: {after: {bake: [PT1H, PT2H]}}
split: {method: random, column: fold}
columns:
  loaf_id: {role: identifier}
  fold: {role: split}
  burnt: {role: target, type: boolean, known: cool}
  proof_minutes: {type: number, known: bake}
  oven: {type: number, known: bake}
YAML
        for run in all one two; do
            opt="--max-rows 100000"
            [ $run = all ] && opt=""
            # shellcheck disable=SC2086
            KNOWABLE_TRACE_STATS=1 "$knowable" check --format json $opt --data "odbc:$conn" --table loaf_days \
                -- "$tmp/loaf.knowable.yaml" >"$tmp/loaf-$run.json" 2>"$tmp/loaf-$run.stats"
            rc=$?
            [ "$rc" -le 1 ] || { fail "check of loaf_days ($run): exit $rc"; cat "$tmp/loaf-$run.stats"; }
        done
        cmp -s "$tmp/loaf-one.json" "$tmp/loaf-two.json" || fail "two runs on the page sample report otherwise"
        /usr/bin/python3 - "$tmp" <<'PY' || fail "the page sample of loaf_days"
import json, sys
tmp = sys.argv[1]
rep = {r: json.load(open("%s/loaf-%s.json" % (tmp, r))) for r in ("all", "one")}
stats = {}
for r in ("all", "one"):
    stats[r] = {tuple(l.split("\t")[1:4]): float(l.split("\t")[4])
                for l in open("%s/loaf-%s.stats" % (tmp, r)) if l.startswith("knowable-stat\t")}
data = rep["one"]["summary"]["data"]
bad = []
if data["rows"] != 300000 or not 85000 <= data.get("sample_rows", 0) <= 115000:
    bad.append("rows %s, sample_rows %s" % (data["rows"], data.get("sample_rows")))
if rep["all"]["summary"]["data"].get("sample_rows") != 300000:
    bad.append("the whole table was sampled: %s" % rep["all"]["summary"]["data"])
counted = lambda r: sorted((d["rule"], d["message"]) for d in rep[r]["diagnostics"]
                           if d["file"].startswith("odbc:") and d["rule"] not in ("lone-feature-separates", "missingness-predicts"))
if counted("all") != counted("one"):
    bad.append("counted findings differ: %s / %s" % (counted("all"), counted("one")))
if not stats["one"] or set(stats["one"]) != set(stats["all"]):
    bad.append("statistics: %s / %s" % (stats["all"], stats["one"]))
for k, v in stats["one"].items():
    if abs(v - stats["all"].get(k, -9)) > 0.02:
        bad.append("%s: %.4f on the sample, %.4f on every row" % (k, v, stats["all"].get(k, -9)))
for b in bad:
    print("FAIL:", b)
print("page sample: %s of %s rows, %d statistics near the whole table's" % (data.get("sample_rows"), data["rows"], len(stats["one"])))
sys.exit(1 if bad else 0)
PY
    fi
else
    echo "no ODBC driver '$driver': the ODBC session is not tried"
fi
[ "$fails" = 0 ] || { echo "$fails failed"; exit 1; }
echo ok
