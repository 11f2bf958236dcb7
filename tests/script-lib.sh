# tests/script-lib.sh - what the scripted tests share (sourced, not run):
# fail, run, expect_rc, expect, expect_not.  The sourcing script sets
# $knowable and $case and counts failures in $fails.

fail() {
    echo "FAIL: $*"
    fails=$((fails + 1))
}

# run NAME ARGS...: knowable ARGS with stdout in NAME.out, stderr in
# NAME.err; sets $rc.
run() {
    name=$1
    shift
    "$knowable" "$@" >"$name.out" 2>"$name.err" </dev/null
    rc=$?
    echo "$case/$name: exit $rc: knowable $*"
    sed -n '1,4p' "$name.out" "$name.err" | cut -c1-200 | sed 's/^/    /'
    if [ "$rc" -ge 128 ]; then
        fail "$name: killed by signal $((rc - 128))"
    fi
}

expect_rc() {
    [ "$rc" = "$1" ] || fail "$name: exit $rc, expected $1"
}

# expect FILE PATTERN: a line of FILE matches the basic regular expression.
expect() {
    grep -q -e "$2" "$1" || { fail "$1: no line matching '$2'"; sed 's/^/    | /' "$1" | head -n 8; }
}

expect_not() {
    if grep -q -e "$2" "$1"; then
        fail "$1: a line matches '$2'"
        sed 's/^/    | /' "$1" | head -n 8
    fi
}
