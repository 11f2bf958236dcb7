#!/bin/sh
# tests/run/run.sh KNOWABLE CASE - one scripted test of a whole run: which
# rulebook judges which schema, which formats each command writes, which
# files a run may write, and that a schema error hides no other finding.
# Each case builds its files in a fresh temporary folder (its own
# repository: it holds .git).  Exit 0 pass, 1 fail.
set -u
knowable=${1:?usage: run.sh KNOWABLE CASE}
case=${2:?usage: run.sh KNOWABLE CASE}
case $knowable in /*) ;; *) knowable=$(pwd)/$knowable ;; esac
lib=$(cd "$(dirname "$0")/.." && pwd)/script-lib.sh
tmp=$(mktemp -d "${TMPDIR:-/tmp}/kn-run.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT
cd "$tmp" || exit 1
mkdir .git
export KNOWABLE_TODAY=2026-06-01 NO_COLOR=1
fails=0

. "$lib"

unchanged() { # FILE COPY
    cmp -s "$1" "$2" || fail "$1 was changed"
}

# A bakery's schema: 'oven_temp' is known at the moment, 'batch_weight' at an
# event up to 2h after it (maybe-after-moment), 'sold_out_by_noon' is the
# target.  schema FILE [INCLUDE]
schema() {
    mkdir -p "$(dirname "$1")"
    {
        echo 'knowable: 1'
        echo 'dataset: bakery_sellout'
        [ -n "${2:-}" ] && echo "include: [$2]"
        echo 'prediction: {moment: ovens_on, target: sold_out_by_noon}'
        echo 'events:'
        echo '  ovens_on: {}'
        echo '  batch_weighed: {after: {ovens_on: [-PT1H, PT2H]}}'
        echo '  noon: {after: {ovens_on: [PT3H, PT6H]}}'
        echo 'sources:'
        echo '  till: {kind: internal}'
        echo 'columns:'
        echo '  sold_out_by_noon: {role: target, known: noon, source: till}'
        echo '  oven_temp: {known: ovens_on, source: till}'
        echo '  batch_weight: {known: batch_weighed, source: till}'
    } >"$1"
}

case $case in
rulebook-per-schema)
    # teamB's rulebook raises maybe-after-moment to error; teamA has none.
    schema teamA/a.knowable.yaml
    schema teamB/b.knowable.yaml
    printf 'knowable_rulebook: 1\nseverity: {maybe-after-moment: error}\n' >teamB/.knowable-rules.yaml
    run ab check --format json -- teamA/a.knowable.yaml teamB/b.knowable.yaml
    expect_rc 1
    run ba check --format json -- teamB/b.knowable.yaml teamA/a.knowable.yaml
    expect_rc 1
    /usr/bin/python3 - ab.out ba.out <<'PY' || fail "the two orders give different findings"
import json, sys
a, b = (sorted(json.dumps(d, sort_keys=True) for d in json.load(open(f))["diagnostics"]) for f in sys.argv[1:])
sys.exit(0 if a == b else 1)
PY
    # The text reports of the two orders are the same, and the summary says
    # which rulebook judged how many schemas.
    run ab-text check -- teamA/a.knowable.yaml teamB/b.knowable.yaml
    run ba-text check -- teamB/b.knowable.yaml teamA/a.knowable.yaml
    sort ab-text.out >ab-sorted.txt
    sort ba-text.out >ba-sorted.txt
    cmp -s ab-sorted.txt ba-sorted.txt || fail "the two orders give different text reports"
    expect ab-text.out "in 2 schemas (rulebooks teamB/.knowable-rules.yaml for 1, the built-in for 1)$"
    # teamA's warning stays a warning; teamB's is an error.
    run a check -- teamA/a.knowable.yaml
    expect_rc 0
    expect a.out "warning: .*batch_weight.*\[maybe-after-moment\]"
    run b check -- teamB/b.knowable.yaml
    expect_rc 1
    expect b.out "error: .*batch_weight.*\[maybe-after-moment\]"
    run rules-b rules teamB/b.knowable.yaml
    expect_rc 0
    expect rules-b.out "maybe-after-moment *error .*(set by teamB/.knowable-rules.yaml)"
    expect rules-b.out "rulebook: teamB/.knowable-rules.yaml"
    run rules-a rules teamA/a.knowable.yaml
    expect rules-a.out "maybe-after-moment *warning"
    expect rules-a.out "rulebook: (built-in)"
    ;;
formats)
    schema s.knowable.yaml
    printf 'id,qty\n1,2\n' >d.csv
    run check-md check --format markdown -- s.knowable.yaml
    expect_rc 2
    expect check-md.err "knowable check: --format markdown is not available here; it writes text or json or sarif"
    [ -s check-md.out ] && fail "check --format markdown wrote a report"
    run sources-text sources --format text -- s.knowable.yaml
    expect_rc 2
    expect sources-text.err "knowable sources: --format text is not available here; it writes json or markdown"
    run sources-md sources -- s.knowable.yaml
    expect_rc 0
    expect sources-md.out "^# Register of feature sources"
    run timeline-json timeline --format json -- s.knowable.yaml
    expect_rc 2
    expect timeline-json.err "knowable timeline: --format json is not available here"
    run init-json init --format json -- d.csv
    expect_rc 2
    expect init-json.err "knowable init: takes no --format"
    run schema-sarif json-schema --format sarif
    expect_rc 2
    ;;
init-rulebook)
    printf 'order_id,weight_kg\nA1,2.5\n' >parcels.csv
    printf 'knowable_rulebook: 1\nseverity: {after-moment: eror}\n' >bad.yaml
    run bad init --rulebook bad.yaml -o draft.yaml -- parcels.csv
    [ -s bad.out ] && fail "init wrote a draft to standard output"
    expect_rc 2
    expect bad.err "bad.yaml:2:.*error: the severity of 'after-moment' must be error, warning, note or off"
    [ -e draft.yaml ] && fail "init wrote a draft under a broken rulebook"
    # A CSV problem is the diagnostic check --data gives.
    printf '' >empty.csv
    run empty init -- empty.csv
    expect_rc 2
    expect empty.err "^empty.csv:.*error: .*\[csv-malformed\]"
    # The draft counts as missing what the rulebook's missing_values say
    # (a dash here), so a numeric column with dashes is still a number;
    # the rulebook is found from where the draft is written.
    printf 'order_id,weight_kg\nA1,-\nA2,2.5\nA3,-\nA4,1.25\n' >dashes.csv
    run builtin init -o builtin.yaml -- dashes.csv
    expect_rc 0
    grep -A3 '"weight_kg"' builtin.yaml | grep -q 'type: category' ||
        fail "under the built-in rulebook a dash is a value (category)"
    mkdir -p team
    printf 'knowable_rulebook: 1\nmissing_values: ["", "-"]\n' >team/.knowable-rules.yaml
    run dashes init -o team/draft.yaml -- dashes.csv
    expect_rc 0
    grep -A3 '"weight_kg"' team/draft.yaml | grep -q 'type: number' ||
        fail "the rulebook's missing_values were not used by init"
    ;;
init-existing)
    printf 'order_id,weight_kg\nA1,2.5\n' >parcels.csv
    printf '# hand-written, 1 line that must survive\n' >mine.yaml
    cp mine.yaml mine.copy
    run refuse init -o mine.yaml -- parcels.csv
    expect_rc 2
    expect refuse.err "not replacing 'mine.yaml': it exists (--force replaces it)"
    unchanged mine.yaml mine.copy
    run force init --force -o mine.yaml -- parcels.csv
    expect_rc 0
    expect mine.yaml "^knowable: 1"
    run new init -o new.yaml -- parcels.csv
    expect_rc 0
    expect new.yaml "^knowable: 1"
    ;;
outputs-never-inputs)
    mkdir -p shared
    printf 'knowable: 1\nsources:\n  scale_log: {kind: internal}\n' >shared/register.yaml
    cp shared/register.yaml register.copy
    schema team/s.knowable.yaml ../shared/register.yaml
    printf 'knowable_rulebook: 1\nseverity: {unused-source: off}\n' >team/.knowable-rules.yaml
    cp team/.knowable-rules.yaml rules.copy
    for how in "-o shared/register.yaml" "--format json -o shared/register.yaml" \
               "--write-baseline shared/register.yaml" "-o team/.knowable-rules.yaml" \
               "-o ./team/../shared/register.yaml"; do
        # shellcheck disable=SC2086
        run over check $how -- team/s.knowable.yaml
        expect_rc 2
        expect over.err "never writes over an input"
        unchanged shared/register.yaml register.copy
        unchanged team/.knowable-rules.yaml rules.copy
    done
    run sources-over sources -o shared/register.yaml -- team/s.knowable.yaml
    expect_rc 2
    unchanged shared/register.yaml register.copy
    run svg-over timeline --svg shared/register.yaml -- team/s.knowable.yaml
    expect_rc 2
    unchanged shared/register.yaml register.copy
    # A schema piped in under --stdin-name stands for that file.
    cp team/s.knowable.yaml schema.copy
    "$knowable" check --stdin-name team/s.knowable.yaml -o team/s.knowable.yaml - \
        <schema.copy >stdin-over.out 2>stdin-over.err
    rc=$?
    expect_rc 2
    expect stdin-over.err "never writes over an input"
    unchanged team/s.knowable.yaml schema.copy
    ls shared team | grep -q tmp- && fail "a temporary file was left behind"
    # Elsewhere the report is written.
    run report check -o report.txt -- team/s.knowable.yaml
    expect_rc 0
    expect report.txt "in 1 schema"
    ;;
baseline-early)
    schema s.knowable.yaml
    printf '{"knowable_baseline": 2, "findings": [' >bad.json
    run bad check --baseline bad.json -- s.knowable.yaml
    expect_rc 2
    expect bad.err "^knowable: baseline 'bad.json'"
    [ -s bad.out ] && fail "a report was written although the baseline could not be read"
    run write check --write-baseline base.json -- s.knowable.yaml
    expect_rc 0
    expect base.json '"knowable_baseline": 2'
    run use check --baseline base.json --fail-on warning -- s.knowable.yaml
    expect_rc 0
    expect use.out "(1 matched the baseline)"
    # A harmless edit of a lag: the finding keeps its fingerprint.
    sed 's/\[-PT1H, PT2H\]/[-PT1H, PT3H]/' s.knowable.yaml >t.knowable.yaml && mv t.knowable.yaml s.knowable.yaml
    run edited check --baseline base.json --fail-on warning -- ./s.knowable.yaml
    expect_rc 0
    ;;
schema-rules-stay-errors)
    schema s.knowable.yaml
    printf 'knowable_rulebook: 1\nseverity: {schema-shape: warning, unknown-reference: off}\n' >lower.yaml
    run lower check --rulebook lower.yaml -- s.knowable.yaml
    expect_rc 2
    expect lower.out "lower.yaml:2:.*error: 'schema-shape' is a schema rule and stays an error"
    expect lower.out "lower.yaml:2:.*error: 'unknown-reference' is a schema rule and stays an error"
    ;;
error-hides-nothing)
    # A typo in one column and a late column elsewhere: both are reported.
    schema s.knowable.yaml
    printf '  shelf_life_days: {type: number, knwon: ovens_on}\n' >>s.knowable.yaml
    printf '  loaves_left_at_close: {known: noon, source: till}\n' >>s.knowable.yaml
    run both check -- s.knowable.yaml
    expect_rc 1
    expect both.out "unknown key 'knwon'.*\[schema-shape\]"
    expect both.out "loaves_left_at_close.*\[after-moment\]"
    expect both.out "batch_weight.*\[maybe-after-moment\]"
    # The misspelt key may be the missing `known`: no second guess.
    expect_not both.out "shelf_life_days.*\[missing-known\]"
    ;;
*)
    echo "no case '$case'"
    exit 1
    ;;
esac

if [ "$fails" != 0 ]; then
    echo "$case: $fails failed"
    exit 1
fi
echo "$case: passed"
exit 0
