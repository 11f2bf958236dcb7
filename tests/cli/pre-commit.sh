#!/bin/sh
# tests/cli/pre-commit.sh KNOWABLE - the pre-commit hooks with the real tool.
#
# Runs Debian's `pre-commit` (package pre-commit) in a temporary git
# repository configured with the README's pre-commit snippet as it stands
# (only `repo:` is pointed at a local copy of this repository's hooks,
# tagged with the snippet's `rev`), and shows that:
# - a commit that changes only an included register (a latency from PT0S
#   to P5D, which makes a column late) runs the hook, which fails;
# - a commit that changes only the rulebook runs it too;
# - a commit of an unrelated file skips it;
# - a clean state passes.
# When this source tree is a git checkout that holds the snippet's rev as a
# tag, the snippet is also run against the checkout itself, unchanged.
# Exits 77 (skipped) when pre-commit or git is missing.
set -u
knowable=${1:?usage: pre-commit.sh KNOWABLE}
case $knowable in /*) ;; *) knowable=$(pwd)/$knowable ;; esac
src=$(cd "$(dirname "$0")/../.." && pwd)
for tool in pre-commit git; do
    if ! command -v "$tool" >/dev/null 2>&1; then
        echo "$tool missing: skipped"
        exit 77
    fi
done
tmp=$(mktemp -d "${TMPDIR:-/tmp}/kn-pre-commit.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT
fails=0
fail() {
    echo "FAIL: $*"
    fails=$((fails + 1))
}
# Nothing outside $tmp: pre-commit's cache, git's global settings.
export HOME="$tmp/home" PRE_COMMIT_HOME="$tmp/cache" XDG_CACHE_HOME="$tmp/cache"
export GIT_CONFIG_NOSYSTEM=1 GIT_AUTHOR_NAME=test GIT_AUTHOR_EMAIL=test@example.invalid
export GIT_COMMITTER_NAME=test GIT_COMMITTER_EMAIL=test@example.invalid KNOWABLE_TODAY=2026-06-01
unset NO_COLOR
mkdir -p "$HOME" "$tmp/bin"
ln -s "$knowable" "$tmp/bin/knowable"
PATH="$tmp/bin:$PATH"
export PATH

# The README's snippet: the yaml block after the "pre-commit:" marker.
awk '/<!-- pre-commit:/ { found = 1; next }
     found && /^```yaml/ { inside = 1; next }
     inside && /^```/ { exit }
     inside { print }' "$src/README.md" >"$tmp/snippet.yaml"
rev=$(sed -n 's/^ *rev: *\([^ #]*\).*/\1/p' "$tmp/snippet.yaml")
if [ -z "$rev" ] || ! grep -q '^ *- repo:' "$tmp/snippet.yaml"; then
    echo "FAIL: no pre-commit snippet with repo: and rev: after the marker in README.md"
    exit 1
fi
echo "README snippet (rev $rev):"
sed 's/^/    /' "$tmp/snippet.yaml"

# A copy of this tree's hooks as a repository of its own, tagged $rev.
hooks="$tmp/hooks"
mkdir -p "$hooks/tools"
cp "$src/.pre-commit-hooks.yaml" "$hooks/"
cp "$src/tools/pre-commit-check" "$hooks/tools/"
(cd "$hooks" && git init -q . && git add -A && git commit -qm hooks && git tag "$rev") ||
    { echo "FAIL: cannot make the hook repository"; exit 1; }

# project REPO_URL DIR: a project with a schema in teamA/ that includes the
# shared register, a rulebook, and the snippet pointing at REPO_URL.
project() {
    dir=$2
    mkdir -p "$dir/teamA" "$dir/shared"
    (
        cd "$dir" || exit 1
        git init -q .
        printf 'knowable: 1\nsources:\n  scan_feed:\n    kind: internal\n    latency: PT0S\n' >shared/register.yaml
        printf 'knowable_rulebook: 1\nseverity: {unused-source: note}\n' >.knowable-rules.yaml
        cat >teamA/parcels.knowable.yaml <<'YAML'
knowable: 1
dataset: parcel_delays
include: [../shared/register.yaml]
prediction: {moment: dispatch, target: delivered_late}
events:
  order_placed: {}
  dispatch: {after: {order_placed: [PT30M, P3D]}}
  delivered: {after: {dispatch: [PT2H, P10D]}}
columns:
  delivered_late: {role: target, known: delivered}
  hub_scans: {known: order_placed, source: scan_feed}
  scan_depot: {known: order_placed, source: scan_feed}
YAML
        echo notes >notes.txt
        sed "s|^\( *- repo:\).*|\1 $1|" "$tmp/snippet.yaml" >.pre-commit-config.yaml
        git add -A
        git commit -qm start --no-verify
    )
}

# hook_run NAME DIR: `pre-commit run` on the staged files; sets $rc.
hook_run() {
    (cd "$2" && pre-commit run --color never) >"$tmp/$1.out" 2>&1
    rc=$?
    echo "$1: pre-commit exit $rc"
    sed 's/^/    /' "$tmp/$1.out" | head -n 12
}

scenario() {
    dir=$1
    # Clean: passes.
    (cd "$dir" && pre-commit run --all-files --color never) >"$tmp/clean.out" 2>&1
    rc=$?
    echo "clean: pre-commit exit $rc"
    sed 's/^/    /' "$tmp/clean.out" | head -n 8
    [ "$rc" = 0 ] || fail "$dir: a clean project does not pass"
    grep -q 'Passed' "$tmp/clean.out" || fail "$dir: the hook did not run on --all-files"

    # Only the register changes: the hook runs and fails.
    sed -i 's/latency: PT0S/latency: P5D/' "$dir/shared/register.yaml"
    (cd "$dir" && git add shared/register.yaml)
    hook_run register "$dir"
    [ "$rc" = 0 ] && fail "$dir: a register change that makes columns late passed"
    grep -q 'Skipped' "$tmp/register.out" && fail "$dir: the hook was skipped for a register change"
    grep -q '\[after-moment\]' "$tmp/register.out" || fail "$dir: the after-moment errors are not reported"
    # ... and a real commit is refused by the installed hook.
    (cd "$dir" && pre-commit install >/dev/null && git commit -qm "slower feed") >"$tmp/commit.out" 2>&1 &&
        fail "$dir: git commit went through"
    (cd "$dir" && git reset -q --hard HEAD)

    # Only the rulebook changes: the hook runs, and fails, since the new
    # rulebook raises maybe-after-moment (a 1h latency) to error.
    sed -i 's/latency: PT0S/latency: PT1H/' "$dir/shared/register.yaml"
    (cd "$dir" && git add shared/register.yaml && git commit -qm "register PT1H" --no-verify)
    printf 'knowable_rulebook: 1\nseverity: {maybe-after-moment: error}\n' >"$dir/.knowable-rules.yaml"
    (cd "$dir" && git add .knowable-rules.yaml)
    hook_run rulebook "$dir"
    [ "$rc" = 0 ] && fail "$dir: a rulebook that raises maybe-after-moment to error passed"
    grep -q 'Skipped' "$tmp/rulebook.out" && fail "$dir: the hook was skipped for a rulebook change"
    (cd "$dir" && git reset -q --hard HEAD)

    # An unrelated file: skipped.
    echo more >>"$dir/notes.txt"
    (cd "$dir" && git add notes.txt)
    hook_run unrelated "$dir"
    grep -q 'Skipped' "$tmp/unrelated.out" || fail "$dir: the hook ran for a text file"
    (cd "$dir" && git reset -q --hard HEAD)
}

project "$hooks" "$tmp/project"
scenario "$tmp/project"

# The snippet against this checkout itself, when it has the tag.
if git -C "$src" rev-parse -q --verify "refs/tags/$rev" >/dev/null 2>&1; then
    echo "this checkout holds the tag $rev: running the snippet against it"
    project "$src" "$tmp/project-tag"
    scenario "$tmp/project-tag"
else
    echo "this tree holds no tag $rev (not a git checkout, or tags not fetched): the copy above stands in"
fi

if [ "$fails" -ne 0 ]; then
    echo "$fails failure(s)"
    exit 1
fi
echo "pre-commit: ok"
