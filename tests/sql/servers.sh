#!/bin/sh
# tests/sql/servers.sh start|stop - starts (or stops) the database servers
# the engine tests use, from Debian's packages, as root in a fresh
# container: PostgreSQL 15 (pg_ctlcluster) and MariaDB (service, else
# mysqld_safe), each with the database `knowable`, a user knowable_owner
# that loads the test rows and a user knowable_reader that may only read.
# A server that does not start is reported and left out: its tests then
# skip (exit 77) with their reason; this script always exits 0.
set -u
pw_owner=owner-rye-42
pw_reader=reader-sourdough-7
action=${1:-start}

if [ "$action" = stop ]; then
    pg_ctlcluster 15 main stop 2>/dev/null
    mariadb-admin shutdown 2>/dev/null || service mariadb stop 2>/dev/null
    exit 0
fi

wait_for() {
    i=0
    while [ $i -lt 30 ]; do
        if "$@" >/dev/null 2>&1; then return 0; fi
        sleep 1
        i=$((i + 1))
    done
    return 1
}

if command -v pg_ctlcluster >/dev/null; then
    pg_ctlcluster 15 main start 2>/dev/null
    if wait_for pg_isready -q -h localhost; then
        su postgres -c "psql -q -v ON_ERROR_STOP=1" <<SQL && echo "servers: PostgreSQL 15 is up" || echo "servers: PostgreSQL is up but its users could not be made; its tests will skip"
DROP DATABASE IF EXISTS knowable;
DROP ROLE IF EXISTS knowable_owner;
DROP ROLE IF EXISTS knowable_reader;
CREATE ROLE knowable_owner LOGIN PASSWORD '$pw_owner';
CREATE ROLE knowable_reader LOGIN PASSWORD '$pw_reader';
CREATE DATABASE knowable OWNER knowable_owner;
SQL
    else
        echo "servers: PostgreSQL did not start; its tests will skip"
    fi
else
    echo "servers: no PostgreSQL installed; its tests will skip"
fi

if command -v mariadb >/dev/null; then
    service mariadb start >/dev/null 2>&1 || { mkdir -p /run/mysqld && chown mysql:mysql /run/mysqld 2>/dev/null; (mysqld_safe >/dev/null 2>&1 &); }
    if wait_for mariadb-admin ping; then
        mariadb <<SQL && echo "servers: MariaDB is up" || echo "servers: MariaDB is up but its users could not be made; its tests will skip"
DROP DATABASE IF EXISTS knowable;
CREATE DATABASE knowable;
CREATE OR REPLACE USER 'knowable_owner'@'%' IDENTIFIED BY '$pw_owner';
CREATE OR REPLACE USER 'knowable_owner'@'localhost' IDENTIFIED BY '$pw_owner';
CREATE OR REPLACE USER 'knowable_reader'@'%' IDENTIFIED BY '$pw_reader';
CREATE OR REPLACE USER 'knowable_reader'@'localhost' IDENTIFIED BY '$pw_reader';
GRANT ALL ON knowable.* TO 'knowable_owner'@'%', 'knowable_owner'@'localhost';
GRANT SELECT ON knowable.* TO 'knowable_reader'@'%', 'knowable_reader'@'localhost';
SQL
    else
        echo "servers: MariaDB did not start; its tests will skip"
    fi
else
    echo "servers: no MariaDB installed; its tests will skip"
fi
exit 0
