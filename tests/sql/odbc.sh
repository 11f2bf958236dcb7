#!/bin/sh
# tests/sql/odbc.sh KNOWABLE - `check --data 'odbc:...'`: options that go
# together, a password never printed (connection refused, connection made),
# and, when knowable has database support and Debian's libsqliteodbc is
# installed, checks of a real SQLite file through ODBC: a clean table, a
# missing table (exit 2, the driver's message), --query, and a query file
# that would write (refused, the rows intact).
# Exit 0 pass, 1 fail.
set -u
knowable=$1
case $knowable in /*) ;; *) knowable=$(pwd)/$knowable ;; esac
here=$(cd "$(dirname "$0")" && pwd)
tmp=$(mktemp -d "${TMPDIR:-/tmp}/kn-odbc.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT
cd "$tmp" || exit 1
cp "$here/query-file.knowable.yaml" parcels.knowable.yaml
fails=0
fail() { echo "FAIL: $*"; fails=$((fails + 1)); }
run() { "$knowable" "$@" >out 2>err; rc=$?; echo "exit $rc: knowable $*"; sed 's/^/    /' err | head -3; }

run check --table parcels -- parcels.knowable.yaml
[ "$rc" = 2 ] || fail "--table without a database --data: exit $rc"
grep -q "go with a database --data" err || fail "--table without odbc: no reason given"

run check --data 'odbc:DSN=no_such_depot;UID=clerk;PWD=tea-and-8-scones' --table parcels -- parcels.knowable.yaml
[ "$rc" = 2 ] || fail "an unknown DSN: exit $rc, expected 2"
if grep -q "tea-and-8-scones" out err; then fail "the password was printed"; fi
built=yes
if grep -q "built without database support\|was built without it" err; then
    built=no
    echo "knowable was built without database support: the refusal is what is tested"
else
    grep -q "cannot connect to odbc:DSN=no_such_depot;UID=clerk;PWD=\*\*\*" err || fail "no masked connection string in the message"
fi

run check --data 'odbc:DSN=x' -- parcels.knowable.yaml
[ "$rc" = 2 ] || fail "a database --data without --table: exit $rc"

# The driver manager is loaded when a database is opened, not linked: a run
# without one maps nothing of it, and a driver manager that cannot be
# loaded is exit 2 with the loader's reason.
if [ "$built" = yes ]; then
    if command -v readelf >/dev/null 2>&1 && readelf -d "$knowable" | grep -q 'NEEDED.*libodbc'; then
        fail "knowable is linked with libodbc (it should load it on demand)"
    fi
    KNOWABLE_ODBC_LIBRARY=$tmp/no-such-libodbc.so run check --data 'odbc:DSN=x' --table parcels -- parcels.knowable.yaml
    [ "$rc" = 2 ] || fail "a driver manager that cannot be loaded: exit $rc"
    grep -q "cannot load unixODBC's driver manager .*no-such-libodbc.so" err || fail "no reason when the driver manager cannot be loaded"
fi

if [ "$built" = yes ] && odbcinst -q -d -n SQLite3 >/dev/null 2>&1 && [ -x /usr/bin/python3 ]; then
    /usr/bin/python3 -c "
import sqlite3
db = sqlite3.connect('parcels.db')
db.execute('CREATE TABLE parcels (weight_kg REAL, arrived_late TEXT)')
db.executemany('INSERT INTO parcels VALUES (?, ?)', [(1.5, 'yes'), (0.4, 'no'), (12.0, 'yes')])
db.commit()
" || fail "cannot make the SQLite file"
    run check --data "odbc:Driver=SQLite3;Database=$tmp/parcels.db;PWD={tea;and}}scones}" --table parcels -- parcels.knowable.yaml
    [ "$rc" = 0 ] || fail "SQLite through ODBC: exit $rc, expected 0 (three rows, no finding)"
    grep -q "0 errors, 0 warnings, 0 notes in 1 schema" out || fail "SQLite through ODBC: not the report of a clean table"
    if grep -q "scones" out err; then fail "the braced password was printed"; fi
    run check --data "odbc:Driver=SQLite3;Database=$tmp/parcels.db" --table 'no_such"table' -- parcels.knowable.yaml
    [ "$rc" = 2 ] || fail "a table that is not there: exit $rc"
    grep -q "cannot read the columns (no_such\"table): .*no such table" err || fail "no message for a table that is not there"
    echo 'SELECT weight_kg FROM parcels WHERE arrived_late = '"'"'yes'"'"';' >light.sql
    run check --data "odbc:Driver=SQLite3;Database=$tmp/parcels.db" --query light.sql -- parcels.knowable.yaml
    [ "$rc" = 0 ] || fail "--query through ODBC: exit $rc"
    grep -q "^odbc:Driver=SQLite3;Database=.*/light.sql: note: the schema declares a column 'arrived_late' that the data does not have \[column-not-in-data\]" out ||
        fail "--query through ODBC: the query's columns were not compared with the schema"
    # A statement that is not a query, or that writes, is refused by the
    # engine's read-only session (exit 2, the driver's words).
    echo 'DELETE FROM parcels' >write.sql
    run check --data "odbc:Driver=SQLite3;Database=$tmp/parcels.db" --query write.sql -- parcels.knowable.yaml
    [ "$rc" = 2 ] || fail "a query file that writes: exit $rc, expected 2"
    [ "$(/usr/bin/python3 -c "import sqlite3; print(sqlite3.connect('parcels.db').execute('SELECT COUNT(*) FROM parcels').fetchone()[0])")" = 3 ] ||
        fail "the rows were deleted"
    run check --data "odbc:Driver=SQLite3;Database=$tmp/missing-dir/none.db" --table parcels -- parcels.knowable.yaml
    [ "$rc" = 2 ] || fail "an SQLite file that cannot be opened: exit $rc"
else
    echo "no SQLite ODBC driver (Debian libsqliteodbc) or no database support: the SQLite session is not tried"
fi
[ "$fails" = 0 ] || { echo "$fails failed"; exit 1; }
echo ok
