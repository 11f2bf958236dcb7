#!/bin/sh
# tests/cli/run.sh KNOWABLE CASE - one scripted test of the command line and
# its files (issue 13: roots, rulebook discovery, output files, options,
# `--` before file names).  Each case builds its files in a fresh temporary
# folder, runs knowable and checks exit statuses, outputs and the files
# left behind.  Exit 0 pass, 1 fail, 77 skipped.
set -u
knowable=${1:?usage: run.sh KNOWABLE CASE}
case=${2:?usage: run.sh KNOWABLE CASE}
case $knowable in /*) ;; *) knowable=$(pwd)/$knowable ;; esac
src=$(cd "$(dirname "$0")/../.." && pwd)
tmp=$(mktemp -d "${TMPDIR:-/tmp}/kn-cli.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT
cd "$tmp" || exit 1
export KNOWABLE_TODAY=2026-06-01
unset NO_COLOR FORCE_COLOR CLICOLOR_FORCE
fails=0

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

# A consistent schema (timed columns, all available at the moment).
# schema FILE [INCLUDE]: writes it, including INCLUDE when given, whose
# register defines the source 'scan_feed'.
schema() {
    mkdir -p "$(dirname "$1")"
    {
        echo 'knowable: 1'
        echo 'dataset: parcel_delays'
        if [ -n "${2:-}" ]; then echo "include: [$2]"; fi
        echo 'prediction: {moment: dispatch, target: delivered_late}'
        echo 'events:'
        echo '  order_placed: {}'
        echo '  dispatch: {after: {order_placed: [PT30M, P3D]}}'
        echo '  delivered: {after: {dispatch: [PT2H, P10D]}}'
        echo 'columns:'
        echo '  delivered_late: {role: target, known: delivered}'
        if [ -n "${2:-}" ]; then
            echo '  hub_scans: {known: order_placed, source: scan_feed}'
        else
            echo '  parcel_weight: {known: order_placed}'
        fi
    } >"$1"
}

# register FILE LATENCY: a shared register with the source 'scan_feed'.
register() {
    mkdir -p "$(dirname "$1")"
    printf 'knowable: 1\nsources:\n  scan_feed:\n    kind: internal\n    latency: %s\n' "$2" >"$1"
}

# ---- item 8: the include root is the repository ---------------------------
case_include_root() {
    # In a repository (a folder holding .git), a team's schema includes the
    # shared register without --root.
    mkdir -p repo/.git
    register repo/shared/register.yaml PT0S
    schema repo/teamA/a.knowable.yaml ../shared/register.yaml
    run repo check -- repo/teamA/a.knowable.yaml
    expect_rc 0
    expect_not repo.out 'include-refused'
    # The register's latency still reaches the verdict: it is read.
    register repo/shared/register.yaml P5D
    run repo-late check -- repo/teamA/a.knowable.yaml
    expect_rc 1
    expect repo-late.out '\[after-moment\]'
    # .git as a file (a worktree) marks a repository too.
    mkdir -p wt/shared
    echo 'gitdir: /nowhere' >wt/.git
    register wt/shared/register.yaml PT0S
    schema wt/teamA/a.knowable.yaml ../shared/register.yaml
    run worktree check -- wt/teamA/a.knowable.yaml
    expect_rc 0
    # Includes still never leave the repository.
    echo 'secret: 1' >outside.yaml
    schema repo/teamA/b.knowable.yaml ../../outside.yaml
    run escape check -- repo/teamA/b.knowable.yaml
    expect_rc 1
    expect escape.out "include '../../outside.yaml' is refused: it leaves the root folder \[include-refused\]"
    expect escape.out 'the root is the repository'
    expect_not escape.out 'secret'
    # Without .git the root is the schema's own folder.
    mkdir -p plain
    register plain/shared/register.yaml PT0S
    schema plain/teamA/a.knowable.yaml ../shared/register.yaml
    run no-repo check -- plain/teamA/a.knowable.yaml
    expect_rc 1
    expect no-repo.out 'it leaves the root folder \[include-refused\]'
    expect no-repo.out 'no folder above it holds .git'
    # --root still widens it, and sources and timeline follow the same root.
    run no-repo-root check --root plain -- plain/teamA/a.knowable.yaml
    expect_rc 0
    run sources sources -- repo/teamA/a.knowable.yaml
    expect_rc 0
    expect sources.out 'scan.*feed'
    run timeline timeline -- repo/teamA/a.knowable.yaml
    expect_rc 0
}

# ---- item 11: rulebook discovery stops at the root -----------------------
case_rulebook_root() {
    # A rulebook planted two folders above a project without .git turns
    # after-moment off; it must not be read.
    mkdir -p attic
    printf 'knowable_rulebook: 1\nseverity: {after-moment: off}\n' >attic/.knowable-rules.yaml
    register attic/team/project/shared.yaml P5D
    schema attic/team/project/a.knowable.yaml shared.yaml
    run planted check -- attic/team/project/a.knowable.yaml
    expect_rc 1
    expect planted.out '\[after-moment\]'
    # With --root at the attic the user asks for it: then it applies.
    run rooted check --root attic -- attic/team/project/a.knowable.yaml
    expect_rc 0
    # In a repository the search reaches the repository's top, no further.
    mkdir -p repo/.git repo/teams/fraud
    printf 'knowable_rulebook: 1\nseverity: {after-moment: warning}\n' >repo/.knowable-rules.yaml
    register repo/teams/fraud/shared.yaml P5D
    schema repo/teams/fraud/a.knowable.yaml shared.yaml
    run repo check -- repo/teams/fraud/a.knowable.yaml
    expect_rc 0
    expect repo.out 'warning: .*\[after-moment\]'
    # A rulebook error is printed with a tidy path, not teams/fraud/../../.
    printf 'knowable_rulebook: 1\nseverity: {after-moment: sometimes}\n' >repo/.knowable-rules.yaml
    (cd repo && "$knowable" check -- teams/fraud/a.knowable.yaml) >tidy.out 2>&1
    rc=$?
    name=tidy
    expect_rc 2
    expect tidy.out '^\.knowable-rules\.yaml:2:'
    expect_not tidy.out '\.\./\.\./'
}

# ---- item 11: output files never replace devices or symbolic links -------
case_output_special() {
    schema s.knowable.yaml
    # A FIFO is written through (a reader on the other end gets the report).
    mkfifo pipe
    cat pipe >from-pipe.txt &
    reader=$!
    run fifo check -o pipe -- s.knowable.yaml
    expect_rc 0
    wait "$reader"
    [ -p pipe ] || fail "fifo: the FIFO was replaced"
    expect from-pipe.txt '0 errors, 0 warnings'
    # A symbolic link stays a link; the file it names gets the report.
    echo old >target.txt
    ln -s target.txt link.txt
    run symlink check -o link.txt -- s.knowable.yaml
    expect_rc 0
    [ -L link.txt ] || fail "symlink: link.txt is no longer a symbolic link"
    expect target.txt '0 errors, 0 warnings'
    # The same for --write-baseline and --svg.
    ln -s base.json base-link.json
    echo '{}' >base.json
    run baseline check --write-baseline base-link.json -- s.knowable.yaml
    expect_rc 0
    [ -L base-link.json ] || fail "baseline: the link was replaced"
    expect base.json 'fingerprint\|"findings"\|\[\]'
    ln -s pic.svg pic-link.svg
    : >pic.svg
    run svg timeline --svg pic-link.svg -- s.knowable.yaml
    expect_rc 0
    [ -L pic-link.svg ] || fail "svg: the link was replaced"
    expect pic.svg '<svg'
    # A link to nothing is refused rather than replaced.
    ln -s missing/nowhere.txt dangling.txt
    run dangling check -o dangling.txt -- s.knowable.yaml
    expect_rc 2
    [ -L dangling.txt ] || fail "dangling: the link was replaced"
    # A character device: /dev/null stays a device (as root it could be
    # deleted by a rename).
    if [ -c /dev/null ] && [ -w /dev/null ]; then
        run null check -o /dev/null -- s.knowable.yaml
        expect_rc 0
        [ -c /dev/null ] || fail "null: /dev/null is no longer a character device"
        run null-svg timeline --svg /dev/null -- s.knowable.yaml
        expect_rc 0
        [ -c /dev/null ] || fail "null-svg: /dev/null is no longer a character device"
    fi
    # /dev/stdout (a link to a pipe or a terminal) is written through.
    "$knowable" check -o /dev/stdout -- s.knowable.yaml >stdout.txt 2>&1
    name=stdout
    rc=$?
    expect_rc 0
    expect stdout.txt '0 errors, 0 warnings'
    ls -A | grep -q 'tmp-' && fail "a temporary file was left behind"
    # An ordinary file is still replaced atomically, keeping its mode.
    echo old >report.txt
    chmod 640 report.txt
    run regular check -o report.txt -- s.knowable.yaml
    expect_rc 0
    expect report.txt '0 errors, 0 warnings'
    [ "$(stat -c %a report.txt)" = 640 ] || fail "regular: the mode changed to $(stat -c %a report.txt)"
}

"case_$(echo "$case" | tr '-' '_')"
if [ "$fails" -ne 0 ]; then
    echo "$case: $fails failure(s)"
    exit 1
fi
echo "$case: ok"
exit 0
