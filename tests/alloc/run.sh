#!/bin/sh
# tests/alloc/run.sh KNOWABLE ARGS... - the allocation-failure test (SPEC §9:
# "out of memory anywhere: exit 2 with a clear message, no crash, no leak").
# KNOWABLE must be built with meson -Dalloc_fail=true, so that the N-th
# allocation fails when KNOWABLE_FAIL_ALLOC=N.  The script first runs
# `KNOWABLE ARGS...` as it is, then again with N = 1, 2, 3... until a run
# gives the same exit status and output as the first (the failure point lies
# past the last allocation).  Every run before that must exit 2, say "out of
# memory" on stderr, and show no crash and no sanitizer report (in an ASan
# build LeakSanitizer runs at exit and reports any leak).  Builds nothing.
set -u
knowable=${1:?usage: run.sh KNOWABLE ARGS...}
shift
tmp=$(mktemp -d "${TMPDIR:-/tmp}/kn-alloc.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT
ASAN_OPTIONS=${ASAN_OPTIONS:-detect_leaks=1}:exitcode=86
UBSAN_OPTIONS=${UBSAN_OPTIONS:-print_stacktrace=1}:halt_on_error=1
export ASAN_OPTIONS UBSAN_OPTIONS

KNOWABLE_FAIL_ALLOC=0 "$knowable" "$@" >"$tmp/want.out" 2>"$tmp/want.err"
want=$?
case $want in 0|1) ;; *)
    echo "the run without a failing allocation exits $want, not 0 or 1:"; cat "$tmp/want.err"; exit 1 ;;
esac

bad=0
n=1
limit=${KNOWABLE_ALLOC_LIMIT:-100000}
while [ "$n" -le "$limit" ]; do
    KNOWABLE_FAIL_ALLOC=$n "$knowable" "$@" >"$tmp/out" 2>"$tmp/err"
    rc=$?
    if [ "$rc" = "$want" ] && cmp -s "$tmp/out" "$tmp/want.out" && cmp -s "$tmp/err" "$tmp/want.err"; then
        if [ "$bad" = 0 ]; then
            echo "each of the $((n - 1)) allocations failed in turn, cleanly (exit 2, \"out of memory\", no sanitizer report)"
        else
            echo "$bad of the $((n - 1)) allocation failures did not end cleanly"
        fi
        [ "$bad" = 0 ] && [ "$n" -gt 1 ] && exit 0
        [ "$n" -gt 1 ] || echo "no allocation was counted: is this an -Dalloc_fail=true build?"
        exit 1
    fi
    problem=""
    if grep -q -e 'Sanitizer' -e 'runtime error' "$tmp/err"; then
        problem="sanitizer report"
    elif [ "$rc" != 2 ]; then
        problem="exit $rc, not 2"
    elif ! grep -q 'out of memory' "$tmp/err"; then
        problem="no \"out of memory\" on stderr"
    fi
    if [ -n "$problem" ]; then
        bad=$((bad + 1))
        echo "KNOWABLE_FAIL_ALLOC=$n: $problem"
        sed 's/^/    /' "$tmp/err" | head -n 30
    fi
    n=$((n + 1))
done
echo "gave up after $limit allocations"
exit 1
