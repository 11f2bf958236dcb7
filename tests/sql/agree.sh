#!/bin/sh
# tests/sql/agree.sh KNOWABLE ENGINE - the same invented rows (agree/rows.py:
# a bakery chain's cake orders) in a CSV file and in a table of ENGINE
# (sqlite: a file through Debian's libsqliteodbc; postgresql, mariadb: the
# servers .ci/run starts, through odbc-postgresql and odbc-mariadb), checked
# with `check --data` both ways under two schemas (a binary target, a
# categorical one): the reports must agree (agree/compare.py: the data
# findings and their counts exactly, every AUC and U to 1e-9).  Then with
# --max-rows 40 the database reads at most 40 groups a query, so the
# engine ranks the wide numeric columns and samples the identifiers: the
# AUCs it computes must still be the CSV file's; with --max-rows 6 the
# split column has more values than that too, so the overlap queries test
# each row's split value in SQL.  With --max-rows 200 (the table has 623
# rows) the statistics come from a sample of about 200 rows the engine
# draws: reported as such, the same every run (two runs give the same
# report), near the figures over every row, the counted findings exact
# (agree/compare.py sampled:200).  Exit 0 pass, 1 fail, 77
# skipped (no driver, no server, no database support).
set -u
knowable=$1
engine=$2
case $knowable in /*) ;; *) knowable=$(pwd)/$knowable ;; esac
here=$(cd "$(dirname "$0")" && pwd)
[ -x /usr/bin/python3 ] || { echo "skipped: no /usr/bin/python3"; exit 77; }
tmp=$(mktemp -d "${TMPDIR:-/tmp}/kn-agree.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT
pw_owner=owner-rye-42
pw_reader=reader-sourdough-7
/usr/bin/python3 "$here/agree/rows.py" "$tmp" || { echo "FAIL: cannot make the rows"; exit 1; }

case $engine in
sqlite)
    odbcinst -q -d -n SQLite3 >/dev/null 2>&1 || { echo "skipped: no SQLite3 ODBC driver (Debian libsqliteodbc)"; exit 77; }
    conn="Driver=SQLite3;Database=$tmp/orders.sqlite"
    ;;
postgresql)
    odbcinst -q -d -n 'PostgreSQL Unicode' >/dev/null 2>&1 || { echo "skipped: no PostgreSQL ODBC driver (Debian odbc-postgresql)"; exit 77; }
    command -v psql >/dev/null && pg_isready -q -h localhost 2>/dev/null ||
        { echo "skipped: no PostgreSQL server on localhost (.ci/run starts one: tests/sql/servers.sh)"; exit 77; }
    PGHOST=localhost PGDATABASE=knowable PGUSER=knowable_owner PGPASSWORD=$pw_owner \
        psql -q -v ON_ERROR_STOP=1 -f "$tmp/postgresql.sql" >"$tmp/load.out" 2>&1 &&
        PGHOST=localhost PGDATABASE=knowable PGUSER=knowable_owner PGPASSWORD=$pw_owner \
            psql -q -c 'GRANT SELECT ON cake_orders TO knowable_reader' >>"$tmp/load.out" 2>&1 ||
        { echo "skipped: cannot load the rows into the database knowable (.ci/run makes it and its users)"; cat "$tmp/load.out"; exit 77; }
    conn="Driver={PostgreSQL Unicode};Server=localhost;Database=knowable;UID=knowable_reader;PWD=$pw_reader"
    ;;
mariadb)
    odbcinst -q -d -n 'MariaDB Unicode' >/dev/null 2>&1 || { echo "skipped: no MariaDB ODBC driver (Debian odbc-mariadb)"; exit 77; }
    command -v mariadb >/dev/null && mariadb -h 127.0.0.1 -u knowable_owner -p"$pw_owner" knowable -e 'SELECT 1' >/dev/null 2>&1 ||
        { echo "skipped: no MariaDB server on 127.0.0.1 with the database knowable (.ci/run starts one: tests/sql/servers.sh)"; exit 77; }
    mariadb -h 127.0.0.1 -u knowable_owner -p"$pw_owner" knowable <"$tmp/mariadb.sql" >"$tmp/load.out" 2>&1 ||
        { echo "FAIL: cannot load the rows"; cat "$tmp/load.out"; exit 1; }
    conn="Driver={MariaDB Unicode};Server=127.0.0.1;Database=knowable;UID=knowable_reader;PWD=$pw_reader"
    ;;
*)
    echo "usage: agree.sh KNOWABLE sqlite|postgresql|mariadb"
    exit 1
    ;;
esac

cp "$here/agree/cakes.yaml" "$here/agree/tiers.yaml" "$tmp/"
cd "$tmp" || exit 1
fails=0
for schema in cakes tiers; do
    KNOWABLE_TRACE_STATS=1 "$knowable" check --format json --data orders.csv -- $schema.yaml >csv.json 2>csv.stats
    rc=$?
    [ "$rc" = 1 ] || { echo "FAIL: $schema: the CSV check exits $rc"; cat csv.stats; fails=$((fails + 1)); continue; }
    for max in default 40 6 sampled; do
        opt=""
        case $max in
        default) ;;
        sampled) opt="--max-rows 200" ;;
        *) opt="--max-groups $max" ;;
        esac
        # shellcheck disable=SC2086
        KNOWABLE_TRACE_STATS=1 KNOWABLE_ODBC_TRAFFIC=1 "$knowable" check --format json $opt --data "odbc:$conn" \
            --table cake_orders -- $schema.yaml >db.json 2>db.stats
        rc=$?
        grep -v '^knowable-stat' db.stats
        if grep -q "built without" db.stats; then echo "skipped: knowable was built without database support"; exit 77; fi
        if [ "$rc" != 1 ]; then echo "FAIL: $schema on $engine ($max): exit $rc"; fails=$((fails + 1)); continue; fi
        if grep -q "$pw_reader" db.json db.stats; then echo "FAIL: the password was printed"; fails=$((fails + 1)); fi
        mode=full
        [ "$max" = default ] || mode=wide
        if [ "$max" = sampled ]; then
            mode=sampled:200
            # drawn the same way again: the same report
            "$knowable" check --format json $opt --data "odbc:$conn" --table cake_orders -- $schema.yaml >again.json 2>/dev/null
            cmp -s db.json again.json || { echo "FAIL: $schema on $engine: a second run on the sample reports otherwise"; diff db.json again.json | head -20; fails=$((fails + 1)); }
        fi
        printf '%s, %s, %s: ' "$schema" "$engine" "${opt:-default}"
        /usr/bin/python3 "$here/agree/compare.py" $mode csv.json csv.stats db.json db.stats || fails=$((fails + 1))
    done
done
[ "$fails" = 0 ] || { echo "$fails failed"; exit 1; }
echo ok
