#!/bin/sh
# run-sql.sh KNOWABLE CASE - runs `knowable sql` on one case of tests/sql and
# compares its output (stdout and stderr, then "exit N") with NAME.expected
# beside it; NAME.args holds the options (--table, --dialect, --query).
# With KNOWABLE_UPDATE_GOLDEN=1 it rewrites the expected file instead: read
# every rewritten file before you commit it.
set -u
bin=$(cd "$(dirname "$1")" && pwd)/$(basename "$1")
case=$2
dir=$(dirname "$case")
base=$(basename "$case" .knowable.yaml)
args=$(cat "$dir/$base.args")
cd "$dir" || exit 1
# shellcheck disable=SC2086
actual=$(KNOWABLE_TODAY=2026-06-01 NO_COLOR=1 ${KNOWABLE_WRAPPER:-} "$bin" sql $args -- "$base.knowable.yaml" 2>&1; echo "exit $?")
if [ "${KNOWABLE_UPDATE_GOLDEN:-}" = 1 ]; then
    printf '%s\n' "$actual" > "$base.expected"
    echo "updated $dir/$base.expected"
    exit 0
fi
expected=$(cat "$base.expected" 2>/dev/null) || { echo "missing $dir/$base.expected; the output was:"; printf '%s\n' "$actual"; exit 1; }
if [ "$actual" != "$expected" ]; then
    printf '%s\n' "$actual" > "${TMPDIR:-/tmp}/knowable-sql.$$"
    diff -u "$base.expected" "${TMPDIR:-/tmp}/knowable-sql.$$"
    rm -f "${TMPDIR:-/tmp}/knowable-sql.$$"
    exit 1
fi
exit 0
