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
lib=$(cd "$(dirname "$0")/.." && pwd)/script-lib.sh
tmp=$(mktemp -d "${TMPDIR:-/tmp}/kn-cli.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT
cd "$tmp" || exit 1
export KNOWABLE_TODAY=2026-06-01
unset NO_COLOR FORCE_COLOR CLICOLOR_FORCE
fails=0

. "$lib"

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
    if [ -p pipe ]; then
        # The reader ends at the writer's close; a watchdog ends it if
        # knowable never opened the FIFO, so a broken build fails, not hangs.
        (sleep 10 && kill "$reader" 2>/dev/null) &
        watchdog=$!
        wait "$reader"
        kill "$watchdog" 2>/dev/null
    else
        fail "fifo: the FIFO was replaced"
        kill "$reader" 2>/dev/null
    fi
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
    # A character device stays a device (as root, a rename over /dev/null
    # would delete it).  The test makes its own node when it can (root), so
    # that a broken build cannot damage the machine's /dev/null; without
    # mknod it uses /dev/null only where /dev is not writable.
    dev=""
    if mknod dev-null c 1 3 2>/dev/null; then
        dev=dev-null
    elif [ ! -w /dev ] && [ -c /dev/null ]; then
        dev=/dev/null
    fi
    if [ -n "$dev" ]; then
        run null check -o "$dev" -- s.knowable.yaml
        expect_rc 0
        [ -c "$dev" ] || fail "null: $dev is no longer a character device"
        run null-svg timeline --svg "$dev" -- s.knowable.yaml
        expect_rc 0
        [ -c "$dev" ] || fail "null-svg: $dev is no longer a character device"
    else
        echo "no character device to test safely: left out"
    fi
    # A link to a descriptor (as /dev/stdout is, made here so that a broken
    # build cannot replace the machine's): written through, into a pipe or
    # appended to the file the shell opened, never renamed over.
    ln -s /proc/self/fd/1 std-link
    "$knowable" check -o std-link -- s.knowable.yaml 2>&1 | cat >piped.txt
    name=piped
    expect piped.txt '0 errors, 0 warnings'
    echo "kept line" >appended.txt
    "$knowable" check -o std-link -- s.knowable.yaml >>appended.txt 2>&1
    rc=$?
    name=appended
    expect_rc 0
    expect appended.txt '^kept line$'
    expect appended.txt '0 errors, 0 warnings'
    [ -L std-link ] || fail "std-link: the link was replaced"
    # /dev/fd/1 resolves into /proc, where nothing can be renamed: safe.
    "$knowable" check -o /dev/fd/1 -- s.knowable.yaml 2>&1 | cat >fd1.txt
    name=fd1
    expect fd1.txt '0 errors, 0 warnings'
    ls -A | grep -q 'tmp-' && fail "a temporary file was left behind"
    # An ordinary file is still replaced atomically, keeping its mode.
    echo old >report.txt
    chmod 640 report.txt
    run regular check -o report.txt -- s.knowable.yaml
    expect_rc 0
    expect report.txt '0 errors, 0 warnings'
    [ "$(stat -c %a report.txt)" = 640 ] || fail "regular: the mode changed to $(stat -c %a report.txt)"
}

# ---- item 5: options and messages ----------------------------------------
case_options() {
    schema s.knowable.yaml
    # Unknown options get a suggestion.
    run typo check --fromat json -- s.knowable.yaml
    expect_rc 2
    expect typo.err "unknown option '--fromat'; did you mean '--format'?"
    expect typo.err "(see 'knowable help check')"
    # "--" ends the options: never an option's value.
    run dashdash-value check -o -- s.knowable.yaml
    expect_rc 2
    expect dashdash-value.err "-o needs a file"
    [ -e ./-- ] && fail "check -o -- wrote a file named --"
    run help-typo help chek
    expect_rc 2
    expect help-typo.err "did you mean 'check'?"
    run version-typo --versoin
    expect_rc 2
    expect version-typo.err "did you mean '--version'?"
    run verbose --verbose
    expect_rc 2
    expect_not verbose.err "did you mean"
    run typo-eq check --rulebok=x.yaml -- s.knowable.yaml
    expect_rc 2
    expect typo-eq.err "did you mean '--rulebook'?"
    run one-dash check -show-waived -- s.knowable.yaml
    expect_rc 2
    expect one-dash.err "did you mean '--show-waived'?"
    run far check --zzz -- s.knowable.yaml
    expect_rc 2
    expect_not far.err 'did you mean'
    # help help, and help on every command.
    run help-help help help
    expect_rc 0
    expect help-help.out '^usage: knowable help'
    for c in check explain rules sources timeline init json-schema; do
        run "help-$c" help "$c"
        expect_rc 0
        expect "help-$c.out" "^usage: knowable $c"
    done
    run help-check-dashdash help check
    expect help-check-dashdash.out 'Put -- before'
}

case_colour() {
    esc=$(printf '\033')
    printf 'knowable: 1\ndataset: x\n' >bad.knowable.yaml
    # Not a terminal: no colour, unless forced.
    run plain check -- bad.knowable.yaml
    expect_not plain.out "$esc"
    for v in FORCE_COLOR=1 CLICOLOR_FORCE=1 FORCE_COLOR=true; do
        env "$v" "$knowable" check -- bad.knowable.yaml >forced.out 2>&1
        grep -q "$esc\[" forced.out || fail "$v: no colour in the output"
    done
    FORCE_COLOR=0 "$knowable" check -- bad.knowable.yaml >f0.out 2>&1
    grep -q "$esc" f0.out && fail "FORCE_COLOR=0: colour in the output"
    CLICOLOR_FORCE=0 "$knowable" check -- bad.knowable.yaml >c0.out 2>&1
    grep -q "$esc" c0.out && fail "CLICOLOR_FORCE=0: colour in the output"
    # --color never wins over the environment.
    FORCE_COLOR=1 "$knowable" check --color never -- bad.knowable.yaml >never.out 2>&1
    grep -q "$esc" never.out && fail "--color never: colour in the output"
    # On a terminal (script(1) gives one): colour, but none for TERM=dumb
    # or NO_COLOR.
    if command -v script >/dev/null 2>&1; then
        TERM=xterm script -qec "$knowable check -- bad.knowable.yaml" /dev/null >tty.out 2>&1
        grep -q "$esc\[" tty.out || fail "terminal: no colour"
        TERM=dumb script -qec "$knowable check -- bad.knowable.yaml" /dev/null >dumb.out 2>&1
        grep -q "$esc\[" dumb.out && fail "TERM=dumb: colour on the terminal"
        grep -q 'bad.knowable.yaml' dumb.out || fail "TERM=dumb: no report"
        NO_COLOR=1 TERM=xterm script -qec "$knowable check -- bad.knowable.yaml" /dev/null >nocolor.out 2>&1
        grep -q "$esc\[" nocolor.out && fail "NO_COLOR: colour on the terminal"
    else
        echo "script(1) missing: the terminal checks are left out"
    fi
}

case_stdin() {
    mkdir -p repo/.git repo/shared repo/teams/fraud
    register repo/shared/register.yaml P5D
    printf 'knowable_rulebook: 1\nseverity: {after-moment: warning}\n' >repo/teams/.knowable-rules.yaml
    schema in.yaml ../../shared/register.yaml
    # '-' with --stdin-name: positions, includes, root and rulebook follow PATH.
    "$knowable" check --stdin-name repo/teams/fraud/new.knowable.yaml -- - <in.yaml >named.out 2>&1
    rc=$?
    name=named
    expect_rc 0
    expect named.out '^repo/teams/fraud/new.knowable.yaml:11:[0-9]*: warning: .*\[after-moment\]'
    expect named.out '^repo/shared/register.yaml:5:'
    # Without --stdin-name: "<stdin>", the root is the current folder.
    schema plain.yaml
    "$knowable" check - <plain.yaml >anon.out 2>&1
    rc=$?
    name=anon
    expect_rc 0
    expect anon.out '0 errors'
    printf 'knowable: 1\n' | "$knowable" check - >anon-bad.out 2>&1
    rc=$?
    name=anon-bad
    expect_rc 1
    expect anon-bad.out "^<stdin>:1:1: error: the schema lacks the required key 'dataset'"
    # Standard input is read once; --stdin-name needs '-'.
    run twice check -- - -
    expect_rc 2
    expect twice.err 'only once'
    run name-alone check --stdin-name x.yaml -- plain.yaml
    expect_rc 2
    # timeline and sources read '-' too.
    "$knowable" timeline --stdin-name repo/teams/fraud/new.knowable.yaml -- - <in.yaml >tl.out 2>&1
    rc=$?
    name=tl
    expect_rc 0
    expect tl.out 'hub_scans'
}

case_messages() {
    # Common first mistakes get a message that says what to do.
    printf 'knowable: 1\ncolumns:\n\tx: {known: a}\n' >tab.knowable.yaml
    run tab check -- tab.knowable.yaml
    expect_rc 2
    expect tab.out "tab.knowable.yaml:3:1: note: a tab: YAML indents with spaces only"
    printf 'order_id,weight_kg\nA1,2.5\n' >orders.csv
    run csv-as-schema check -- orders.csv
    expect_rc 1
    expect csv-as-schema.out "this looks like a data file: .*--data"
    schema base.knowable.yaml
    run report check --format json -o report.json -- base.knowable.yaml
    run report-as-baseline check --baseline report.json -- base.knowable.yaml
    expect_rc 2
    expect report-as-baseline.err "this is a check report (--format json), not a baseline"
    printf 'knowable_rulebook: 1\nseverity: {after-moment: warn}\n' >warn.yaml
    run warn check --rulebook warn.yaml -- base.knowable.yaml
    expect_rc 2
    expect warn.out "did you mean 'warning'?"
    # A missing required key: no empty parentheses.
    printf 'knowable: 1\ndataset: x\nevents: {a: {}}\ncolumns: {y: {known: a}}\n' >np.knowable.yaml
    run no-prediction check -- np.knowable.yaml
    expect_rc 1
    expect no-prediction.out "lacks the required key 'prediction'"
    expect_not no-prediction.out '()'
    # An expired waiver that covers nothing does not speak of "the 0 findings".
    schema w.knowable.yaml
    cat >>w.knowable.yaml <<'YAML'
  parcel_count:
    known: order_placed
    waive:
      - {rule: suspicious-name, reason: fixed at order time, expires: 2026-01-01}
YAML
    run waiver check -- w.knowable.yaml
    expect waiver.out 'waiver-expired'
    expect_not waiver.out ' 0 finding'
}

# ---- item 10: a file name cannot switch the gate off ----------------------
case_dashdash() {
    # A schema with an error, a rulebook that turns everything off named
    # like a schema, and an empty file named like an option.
    printf 'knowable_rulebook: 1\nseverity: {after-moment: off, maybe-after-moment: off, schema-shape: off}\n' >off.knowable.yaml
    : >./--rulebook=off.knowable.yaml
    register shared.yaml P5D
    schema late.knowable.yaml shared.yaml
    # With -- (as every documented command line has it).
    run dashdash check -- --rulebook=off.knowable.yaml late.knowable.yaml off.knowable.yaml
    [ "$rc" = 0 ] && fail "dashdash: the gate passed"
    expect dashdash.out "^off.knowable.yaml:1:1: error: 'off.knowable.yaml' is a rulebook"
    expect dashdash.out '\[after-moment\]'
    # Without --, the rulebook among the schemas is still refused.
    run no-dashdash check --rulebook=off.knowable.yaml late.knowable.yaml off.knowable.yaml
    [ "$rc" = 0 ] && fail "no-dashdash: the gate passed"
    expect no-dashdash.out 'is a rulebook (it has the key knowable_rulebook)\|is a schema rule and stays an error'
    # A rulebook pulled in as a register is refused too.
    schema inc.knowable.yaml off.knowable.yaml
    run included check -- inc.knowable.yaml
    expect_rc 2
    expect included.out 'is a rulebook'
}

# ---- item 10: the README's CI lines, as they stand ------------------------
# readme_block: the sh block after the "CI lines" marker of the README.
readme_block() {
    awk '/<!-- CI lines:/ { found = 1; next }
         found && /^```sh/ { inside = 1; next }
         inside && /^```/ { exit }
         inside { print }' "$src/README.md"
}

case_readme_ci() {
    if ! command -v git >/dev/null 2>&1; then
        echo "git missing"
        exit 77
    fi
    readme_block >ci-lines.sh
    [ -s ci-lines.sh ] || { fail "no CI block after the marker in README.md"; return; }
    grep -q -- ' -- \$(git ls-files' ci-lines.sh || fail "README's CI lines do not put -- before the file names"
    mkdir bin
    ln -s "$knowable" bin/knowable
    # A clean repository: the baseline is written (exit 0) and then used.
    mkdir clean
    (
        cd clean || exit 1
        git init -q . && git config user.email ci@example.invalid && git config user.name ci
        register shared.yaml P5D
        schema late.knowable.yaml shared.yaml
        git add -A
        PATH="../bin:$PATH" sh -e ../ci-lines.sh
    ) >clean.out 2>&1
    rc=$?
    name=clean
    expect_rc 0
    [ -f clean/.knowable-baseline.json ] || fail "clean: no baseline written"
    # A pull request adds an option-named file and a rulebook that turns
    # everything off: the same lines must not pass.
    (
        cd clean || exit 1
        printf 'knowable_rulebook: 1\nseverity: {after-moment: off, schema-shape: off}\n' >off.knowable.yaml
        : >./--rulebook=off.knowable.yaml
        schema new-late.knowable.yaml shared.yaml
        git add -A
        PATH="../bin:$PATH" sh -c "$(sed -n 3p ../ci-lines.sh)"
    ) >attack.out 2>&1
    rc=$?
    name=attack
    sed 's/^/    clean| /' clean.out | head -n 6
    sed 's/^/    attack| /' attack.out | head -n 6
    [ "$rc" = 0 ] && fail "attack: the README's check line passed with --rulebook=off.knowable.yaml in the tree"
    expect attack.out 'is a rulebook'
}

# ---- the README's report excerpt, as it stands -----------------------------
# Every line of the block after "From the demo (" (but "...") is a line of
# the demo's report, in the same order; the summary is its last line.
case_readme_report() {
    awk '/^From the demo \(/ { found = 1; next }
         found && /^```/ && !inside { inside = 1; next }
         inside && /^```/ { exit }
         inside { print }' "$src/README.md" >excerpt.txt
    [ -s excerpt.txt ] || { fail "no report excerpt after 'From the demo (' in README.md"; return; }
    (cd "$src/examples" && "$knowable" check --color never -- parcel-delays.knowable.yaml) >report.txt 2>&1
    rc=$?
    name=report
    expect_rc 1
    # Each excerpt line must be found after the previous one.
    awk 'NR == FNR { if ($0 != "...") want[++n] = $0; next }
         k < n && $0 == want[k + 1] { k++ }
         END { if (k < n) { print "not in the report (in order): " want[k + 1]; exit 1 } }' \
        excerpt.txt report.txt || fail "the README's excerpt is not what check prints"
    [ "$(tail -n 1 excerpt.txt)" = "$(tail -n 1 report.txt)" ] || fail "the README's summary line is not check's"
}

"case_$(echo "$case" | tr '-' '_')"
if [ "$fails" -ne 0 ]; then
    echo "$case: $fails failure(s)"
    exit 1
fi
echo "$case: ok"
exit 0
