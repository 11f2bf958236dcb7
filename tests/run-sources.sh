#!/bin/sh
# run-sources.sh KNOWABLE CASE.cmd - runs `knowable sources` with the
# arguments in CASE.cmd (one line), from the case's folder, and compares its
# output (stdout and stderr, then "exit N") with CASE.expected beside it.
# A register asked for with --format json must also parse as JSON (checked
# with /usr/bin/python3 when it is there).
# With KNOWABLE_UPDATE_GOLDEN=1 it rewrites the expected file instead: read
# every rewritten file before you commit it.
set -u
bin=$(cd "$(dirname "$1")" && pwd)/$(basename "$1")
case=$2
dir=$(dirname "$case")
base=$(basename "$case" .cmd)
cd "$dir" || exit 1
args=$(cat "$base.cmd")
tmp=${TMPDIR:-/tmp}/knowable-sources.$$
# shellcheck disable=SC2086
KNOWABLE_TODAY=2026-06-01 NO_COLOR=1 ${KNOWABLE_WRAPPER:-} "$bin" sources $args > "$tmp.out" 2> "$tmp.err"
status=$?
actual=$(cat "$tmp.out" "$tmp.err"; echo "exit $status")
case " $args " in
*" --format json "*)
    if [ "$status" = 0 ] && [ -x /usr/bin/python3 ] && ! /usr/bin/python3 -m json.tool "$tmp.out" > /dev/null; then
        echo "the JSON register of $dir/$base does not parse"
        rm -f "$tmp.out" "$tmp.err"
        exit 1
    fi
    ;;
esac
rm -f "$tmp.out" "$tmp.err"
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
    printf '%s\n' "$actual" > "$tmp.actual"
    diff -u "$base.expected" "$tmp.actual"
    rm -f "$tmp.actual"
    exit 1
fi
exit 0
