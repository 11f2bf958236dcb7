#!/bin/sh
# tests/sql/odbc.sh KNOWABLE - `check --data 'odbc:...'`: options that go
# together, a password never printed (connection refused, connection made),
# and, when knowable has database support and Debian's libsqliteodbc is
# installed, a read-only session on a real SQLite file through ODBC.
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

if [ "$built" = yes ] && odbcinst -q -d -n SQLite3 >/dev/null 2>&1 && [ -x /usr/bin/python3 ]; then
    /usr/bin/python3 -c "
import sqlite3
db = sqlite3.connect('parcels.db')
db.execute('CREATE TABLE parcels (weight_kg REAL, arrived_late TEXT)')
db.executemany('INSERT INTO parcels VALUES (?, ?)', [(1.5, 'yes'), (0.4, 'no'), (12.0, 'yes')])
db.commit()
" || fail "cannot make the SQLite file"
    run check --data "odbc:Driver=SQLite3;Database=$tmp/parcels.db;PWD={tea;and}}scones}" --table parcels -- parcels.knowable.yaml
    [ "$rc" = 2 ] || fail "SQLite through ODBC: exit $rc (the data rules are not finished: 2)"
    grep -q "connected read-only to odbc:Driver=SQLite3;Database=.*;PWD=\*\*\* (parcels: 2 columns), but" err || fail "no read-only session on SQLite"
    if grep -q "scones" out err; then fail "the braced password was printed"; fi
    run check --data "odbc:Driver=SQLite3;Database=$tmp/parcels.db" --table 'no_such"table' -- parcels.knowable.yaml
    [ "$rc" = 2 ] || fail "a table that is not there: exit $rc"
    grep -q "cannot read the columns of no_such\"table: .*no such table" err || fail "no message for a table that is not there"
    echo 'SELECT weight_kg FROM parcels WHERE arrived_late = '"'"'yes'"'"';' >light.sql
    run check --data "odbc:Driver=SQLite3;Database=$tmp/parcels.db" --query light.sql -- parcels.knowable.yaml
    [ "$rc" = 2 ] || fail "--query through ODBC: exit $rc"
    grep -q "(--query: 1 column)" err || fail "--query through ODBC: the query's columns were not read"
    run check --data "odbc:Driver=SQLite3;Database=$tmp/missing-dir/none.db" --table parcels -- parcels.knowable.yaml
    [ "$rc" = 2 ] || fail "an SQLite file that cannot be opened: exit $rc"
else
    echo "no SQLite ODBC driver (Debian libsqliteodbc) or no database support: the SQLite session is not tried"
fi
[ "$fails" = 0 ] || { echo "$fails failed"; exit 1; }
echo ok
