#!/bin/sh
# run-golden.sh KNOWABLE CASE - runs `knowable check` on one golden case and
# compares its output (stdout and stderr, then "exit N") with the expected
# file beside it.  See tests/cases/README.md for the layout.
# With KNOWABLE_UPDATE_GOLDEN=1 it rewrites the expected file instead: read
# every rewritten file before you commit it.
set -u
bin=$(cd "$(dirname "$1")" && pwd)/$(basename "$1")
case=$2
dir=$(dirname "$case")
base=$(basename "$case" .knowable.yaml)
args=""
if [ -f "$dir/$base.args" ]; then
    args=$(cat "$dir/$base.args")
fi
cd "$dir" || exit 1
# shellcheck disable=SC2086
actual=$(KNOWABLE_TODAY=2026-06-01 NO_COLOR=1 ${KNOWABLE_WRAPPER:-} "$bin" check $args -- "$base.knowable.yaml" 2>&1; echo "exit $?")
if [ "${KNOWABLE_UPDATE_GOLDEN:-}" = 1 ]; then
    printf '%s\n' "$actual" > "$base.expected"
    echo "updated $dir/$base.expected"
    exit 0
fi
if [ ! -f "$base.expected" ]; then
    echo "missing $dir/$base.expected; the output was:"
    printf '%s\n' "$actual"
    exit 1
fi
expected=$(cat "$base.expected")
if [ "$actual" != "$expected" ]; then
    echo "output differs from $dir/$base.expected:"
    printf '%s\n' "$actual" > "${TMPDIR:-/tmp}/knowable-golden.$$"
    diff -u "$base.expected" "${TMPDIR:-/tmp}/knowable-golden.$$"
    rm -f "${TMPDIR:-/tmp}/knowable-golden.$$"
    exit 1
fi
exit 0
