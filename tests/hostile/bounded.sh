#!/bin/sh
# tests/hostile/bounded.sh KNOWABLE CASE - one bounded-cost test (SPEC §9):
# small inputs that once cost minutes or gigabytes.  Each case writes its
# input into a fresh temporary folder, large enough that the old behaviour
# took far longer than the meson timeout or far more memory, and asserts
# what bounds the cost now: the exit status, the truncation said in the
# output, and the size of the output.  Times are printed, never asserted.
# Exit 0 pass, 1 fail.
set -u
knowable=${1:?usage: bounded.sh KNOWABLE CASE}
case=${2:?usage: bounded.sh KNOWABLE CASE}
case $knowable in /*) ;; *) knowable=$(pwd)/$knowable ;; esac
tmp=$(mktemp -d "${TMPDIR:-/tmp}/kn-bounded.XXXXXX") || exit 1
trap 'rm -rf "$tmp"' EXIT
cd "$tmp" || exit 1
export KNOWABLE_TODAY=2026-12-01
unset NO_COLOR
fails=0

fail() {
    echo "FAIL: $*"
    fails=$((fails + 1))
}

# run NAME ARGS...: runs knowable ARGS with stdout in NAME.out and stderr in
# NAME.err, sets $rc, prints the wall time.
run() {
    name=$1
    shift
    t0=$(date +%s%N)
    "$knowable" "$@" >"$name.out" 2>"$name.err"
    rc=$?
    t1=$(date +%s%N)
    echo "$case/$name: exit $rc in $(((t1 - t0) / 1000000)) ms, $(wc -c <"$name.out") bytes: knowable $*" | cut -c1-200
    if [ "$rc" -ge 128 ]; then
        fail "$name: killed by signal $((rc - 128))"
    fi
    if grep -q -e 'Sanitizer' -e 'runtime error' "$name.err"; then
        fail "$name: sanitizer report"
        head -n 20 "$name.err"
    fi
}

expect_rc() {
    [ "$rc" = "$1" ] || { fail "$name: exit $rc, expected $1"; sed 's/^/    /' "$name.err" | head -n 5; }
}

# expect_grep PATTERN FILE WHAT: FILE holds a line matching PATTERN.
expect_grep() {
    grep -q -e "$1" "$2" || fail "$name: $3"
}

# at_most BYTES FILE: the output stays bounded.
at_most() {
    size=$(wc -c <"$2")
    [ "$size" -le "$1" ] || fail "$2 holds $size bytes, more than $1"
}

# most_notes FILE: the largest number of notes under one diagnostic.
most_notes() {
    awk '/: (error|warning): / { n = 0 } /: note: / { n++; if (n > m) m = n } END { print m + 0 }' "$1"
}

# An event chain: e0 <- e1 <- ... <- e(N-1), each 1h to 2h after the one
# before; declared oldest first (old) or newest first (new).
event_chain() {
    awk -v n="$1" -v order="$2" 'BEGIN {
        for (k = 0; k < n; k++) {
            i = order == "old" ? k : n - 1 - k
            if (i == 0) print "  e0: {}"
            else printf "  e%d: {after: {e%d: [PT1H, PT2H]}}\n", i, i - 1
        }
    }'
}

case_event_order() {
    # The solver once ran in declaration order: 32,000 events declared
    # newest first took 5 s (oldest first 0.17 s) and 64,000 took 34 s.
    for order in old new; do
        { printf '%s\n' 'knowable: 1' 'dataset: parcels' 'prediction: {moment: e0, target: late}' 'events:'
          event_chain 64000 $order
          printf '%s\n' 'columns:' '  late: {role: target, known: e1}' '  weight: {known: e63999}'
        } >$order.knowable.yaml
        run $order check $order.knowable.yaml
        expect_rc 1
        expect_grep "^$order.knowable.yaml:[0-9]*:[0-9]*: error: column 'weight' .*\[after-moment\]" $order.out \
            "no after-moment finding for the column at the end of the chain"
    done
    sed 's/^old/X/' old.out >old.cmp
    sed 's/^new/X/' new.out | grep -v ': note: ' >new.cmp
    grep -v ': note: ' old.cmp >old.cmp2
    cmp -s old.cmp2 new.cmp || fail "the verdict depends on the order of declaration"
}

case_many_contradictions() {
    # 100 contradictions among 32,000 events took 74 s (the search restarted
    # a sweep per edge of each loop) and said nothing of its cut.
    awk 'BEGIN {
        n = 32000
        print "knowable: 1\ndataset: parcels\nprediction: {moment: e0, target: late}\nevents:\n  e0: {}"
        for (i = 1; i < n; i++) {
            if (i % 300 == 0) printf "  e%d: {after: {e%d: [PT1H, PT2H]}, before: {e%d: PT3H}}\n", i, i - 1, i - 1
            else printf "  e%d: {after: {e%d: [PT1H, PT2H]}}\n", i, i - 1
        }
        print "columns:\n  late: {role: target, known: e1}"
    }' >loops.knowable.yaml
    run loops check loops.knowable.yaml
    expect_rc 1
    n=$(grep -c ': error: .*\[timeline-contradiction\]' loops.out)
    [ "$n" = 100 ] || fail "loops: $n contradictions reported, expected the first 100"
    expect_grep '^loops.knowable.yaml: note: the search for contradictions stopped after 100' loops.out \
        "the output does not say the search stopped"
    # One loop through the whole chain: its notes are capped.
    awk 'BEGIN {
        n = 20000
        print "knowable: 1\ndataset: parcels\nprediction: {moment: e0, target: late}\nevents:"
        printf "  e0: {after: {e%d: PT1H}}\n", n - 1
        for (i = 1; i < n; i++) printf "  e%d: {after: {e%d: PT1H}}\n", i, i - 1
        print "columns:\n  late: {role: target, known: e1}"
    }' >ring.knowable.yaml
    run ring check ring.knowable.yaml
    expect_rc 1
    expect_grep 'note: \.\.\. and 19984 more constraints of this loop, not shown' ring.out \
        "ring: the notes of the loop are not capped"
    [ "$(most_notes ring.out)" -le 17 ] || fail "ring: $(most_notes ring.out) notes under one diagnostic"
}

case_long_chain_notes() {
    # 5,000 columns known at the end of a 2,000-event chain: every note
    # listed the whole chain (819 MB of text, 2.7 GB of memory, 37 s).
    { printf '%s\n' 'knowable: 1' 'dataset: parcels' 'prediction: {moment: e0, target: late}' 'events:'
      event_chain 2000 old
      printf '%s\n' 'columns:' '  late: {role: target, known: e1}'
      awk 'BEGIN { for (i = 0; i < 5000; i++) printf "  f%d: {known: e1999}\n", i }'
    } >chain.knowable.yaml
    run chain check chain.knowable.yaml
    expect_rc 1
    n=$(grep -c ": error: column 'f[0-9]*' .*\[after-moment\]" chain.out)
    [ "$n" = 5000 ] || fail "chain: $n findings, expected 5000"
    expect_grep '^chain.knowable.yaml: note: \.\.\. and 1983 more constraints of this chain, not shown$' chain.out \
        "chain: no note says how many constraints were left out"
    [ "$(most_notes chain.out)" -le 18 ] || fail "chain: $(most_notes chain.out) notes under one diagnostic"
    at_most 12000000 chain.out
    run sarif check --format sarif chain.knowable.yaml
    expect_rc 1
    at_most 40000000 sarif.out
}

case_target_chain() {
    # A 1,400-column derived_from chain from the target: the message was
    # re-printed once per hop (1,000 columns: 1.4 GB, 10 s, 44 MB of text).
    awk 'BEGIN {
        n = 1400
        print "knowable: 1\ndataset: parcels\nprediction: {moment: e0, target: c0}\nevents:\n  e0: {}\ncolumns:"
        print "  c0: {role: target, known: e0}"
        for (i = 1; i < n; i++) printf "  c%d: {derived_from: [c%d]}\n", i, i - 1
    }' >target.knowable.yaml
    run target check target.knowable.yaml
    expect_rc 1
    n=$(grep -c ': error: .*\[built-from-target\]' target.out)
    [ "$n" = 1399 ] || fail "target: $n findings, expected 1399"
    expect_grep "^target.knowable.yaml:[0-9]*:[0-9]*: error: feature 'c1399' is derived from the target 'c0' through 'c1398', .* and 1390 more columns \[built-from-target\]\$" \
        target.out "target: the message does not say how many columns it left out"
    expect_grep '^target.knowable.yaml: note: \.\.\. and 1383 more derivations on the way to the target, not shown$' \
        target.out "target: the notes do not say how many derivations they left out"
    [ "$(most_notes target.out)" -le 18 ] || fail "target: $(most_notes target.out) notes under one diagnostic"
    at_most 3000000 target.out
}

case_derivation_cycle() {
    # A 20,000-column derivation cycle: the path text was built one name at
    # a time (2.2 GB, 32 s).
    awk 'BEGIN {
        n = 20000
        print "knowable: 1\ndataset: parcels\nprediction: {moment: e0, target: t}\nevents:\n  e0: {}\ncolumns:"
        print "  t: {role: target, known: e0}"
        for (i = 0; i < n; i++) printf "  c%d: {derived_from: [c%d]}\n", i, (i + 1) % n
    }' >cycle.knowable.yaml
    run cycle check cycle.knowable.yaml
    expect_rc 1
    expect_grep "^cycle.knowable.yaml:[0-9]*:[0-9]*: error: column 'c0' is derived from itself through 'c0' -> .* -> (19992 more) -> 'c0' \[derivation-cycle\]\$" \
        cycle.out "cycle: the message does not say how many columns it left out"
    expect_grep '^cycle.knowable.yaml: note: \.\.\. and 19984 more derivations of this cycle, not shown$' \
        cycle.out "cycle: the notes do not say how many derivations they left out"
    [ "$(most_notes cycle.out)" -le 17 ] || fail "cycle: $(most_notes cycle.out) notes under one diagnostic"
    at_most 10000 cycle.out
}

# suggest_schema N: N events with random names of 250 letters, and N
# columns known at an undefined event: the odd ones one letter off a
# defined name, the even ones at a random name.
suggest_schema() {
    awk -v n="$1" 'function word(   w, k) { w = ""; for (k = 0; k < 250; k++) w = w substr("abcdefghijklmnopqrstuvwxyz", int(rand() * 26) + 1, 1); return w }
    BEGIN {
        srand(7)
        print "knowable: 1\ndataset: parcels\nprediction: {moment: e0, target: t}\nevents:\n  e0: {}"
        for (i = 0; i < n; i++) { name[i] = word(); printf "  %s: {after: e0}\n", name[i] }
        print "columns:\n  t: {role: target, known: e0}"
        for (i = 0; i < n; i++) {
            if (i % 2) ref = substr(name[i], 1, 99) "0" substr(name[i], 101)
            else ref = word()
            printf "  c%d: {known: %s}\n", i, ref
        }
    }'
}

case_did_you_mean() {
    # 1,000 unknown references among 1,000 names of 250 letters: every
    # reference was compared in full with every name (69 s).
    suggest_schema 1000 >near.knowable.yaml
    run near check near.knowable.yaml
    expect_rc 1
    n=$(grep -c ': error: .*did you mean .*\[unknown-reference\]' near.out)
    [ "$n" = 500 ] || fail "near: $n suggestions, expected one for each of the 500 near misses"
    grep -q 'suggestions stop here' near.out && fail "near: the suggestions stopped"
    # 5,000 of them: more than the run's budget for suggestions, which
    # says where it stopped.
    suggest_schema 5000 >many.knowable.yaml
    run many check many.knowable.yaml
    expect_rc 1
    expect_grep "^many.knowable.yaml: note: 'did you mean' suggestions stop here: " many.out \
        "many: the output does not say the suggestions stopped"
    n=$(grep -c ': error: .*\[unknown-reference\]' many.out)
    [ "$n" = 5000 ] || fail "many: $n unknown references reported, expected 5000"
}

# An endless first line (issue 14): the reader refuses the header at its
# first problem instead of scanning to a line end that never comes.
case_data_endless_header() {
    printf '%s\n' 'knowable: 1' 'dataset: d' 'prediction: {moment: x, target: t}' 'events: {x: {}, y: {after: x}}' \
        'columns:' '  t: {role: target, known: y, type: boolean}' >d.knowable.yaml
    run zero check --data /dev/zero d.knowable.yaml
    expect_rc 1
    expect_grep '^/dev/zero:1:1: error: NUL byte in field 1.*\[csv-malformed\]' zero.out "no csv-malformed at 1:1"
    run init init /dev/zero
    expect_rc 2
    expect_grep 'NUL byte' init.err "init does not name the NUL byte"
    # a first line of 20 MB without a line break: refused at the 1 MiB field cap
    awk 'BEGIN { s = "aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa"; for (i = 0; i < 400000; i++) printf "%s", s }' >long.csv
    run long check --data long.csv d.knowable.yaml
    expect_rc 1
    expect_grep 'longer than 1048576 bytes' long.out "no field-too-long on the header"
}

# 99,999 declared columns, all in the data (issue 14: 17.6 s, header
# matching quadratic in the columns, a full block of the sample per column),
# and 20,000 undeclared names against 20,000 declared ones ("did you mean"
# compared every name with every name).
case_data_wide_header() {
    awk 'BEGIN { print "knowable: 1\ndataset: d\nprediction: {moment: x, target: t}\nevents: {x: {}, y: {after: x}}\ncolumns:\n  t: {role: target, known: y, type: boolean}";
                 for (i = 0; i < 99999; i++) printf "  c%d: {known: x, type: number}\n", i }' >w.knowable.yaml
    awk 'BEGIN { printf "t"; for (i = 0; i < 99999; i++) printf ",c%d", i; print "";
                 for (r = 0; r < 20; r++) { printf "%s", (r % 2 ? "true" : "false"); for (i = 0; i < 99999; i++) printf ",%d", (i * r) % 97; print "" } }' >w.csv
    run wide check --fail-on never --data w.csv w.knowable.yaml
    expect_rc 0
    grep -q 'csv-malformed\|column-not-in' wide.out && fail "wide: the header was not matched whole"
    expect_grep 'in 1 schema' wide.out "wide: no summary"
    awk 'BEGIN { print "knowable: 1\ndataset: d\nprediction: {moment: x, target: t}\nevents: {x: {}, y: {after: x}}\ncolumns:\n  t: {role: target, known: y, type: boolean}";
                 for (i = 0; i < 20000; i++) printf "  declared_column_number_%d: {known: x, type: number}\n", i }' >u.knowable.yaml
    awk 'BEGIN { printf "t"; for (i = 0; i < 20000; i++) printf ",data_column_name_%d", i; print ""; printf "true"; for (i = 0; i < 20000; i++) printf ","; print "" }' >u.csv
    run unknown check --fail-on never --data u.csv u.knowable.yaml
    expect_rc 0
    n=$(grep -c 'column-not-in-schema' unknown.out)
    [ "$n" = 20000 ] || fail "unknown: $n column-not-in-schema findings, expected 20000"
}

# A schema with one feature per name given, each known at the moment.
names_schema() {
    printf '%s\n' 'knowable: 1' 'dataset: d' 'prediction: {moment: x, target: t, label_known: y}' \
        'events: {x: {}, y: {after: x}}' 'sources: {s: {kind: internal}}' 'columns:' '  t: {role: target, known: y}'
    for c in "$@"; do
        echo "  $c: {known: x, source: s}"
    done
}

case_rulebook_extends() {
    # Each level extends the next twelve times, eight levels deep: every
    # file was read once per path (12^8 reads; depth 4 took over 100 s).
    for d in 0 1 2 3 4 5 6 7 8; do
        {
            echo 'knowable_rulebook: 1'
            if [ $d -lt 8 ]; then
                printf 'extends: ['
                for i in 1 2 3 4 5 6 7 8 9 10 11; do printf 'r%d.yaml, ' $((d + 1)); done
                echo "r$((d + 1)).yaml]"
            fi
            echo 'names:'
            echo "  - {pattern: 'level$d', why: level $d}"
        } >r$d.yaml
    done
    names_schema level0 level8 >s.knowable.yaml
    run fan check --rulebook r0.yaml s.knowable.yaml
    expect_rc 0
    for c in level0 level8; do
        n=$(grep -c ": warning: feature '$c' .*\[suspicious-name\]" fan.out)
        [ "$n" = 1 ] || fail "fan: $n findings for '$c', expected 1 (each file read once)"
    done
    # extends obeys the include rules: no absolute path, nothing outside
    # the root, regular files only (a FIFO or /dev/stdin once blocked).
    mkdir -p root/sub outside
    printf 'knowable_rulebook: 1\nnames:\n  - {pattern: secret, why: outside}\n' >outside/x.yaml
    ln -s /proc/self/status root/status.yaml
    ln -s /dev/stdin root/stdin.yaml
    mkdir root/folder.yaml
    printf '%s\n' 'knowable_rulebook: 1' 'extends:' '  - ../outside/x.yaml' '  - /etc/passwd' '  - status.yaml' \
        '  - stdin.yaml' '  - folder.yaml' '  - sub/../../outside/x.yaml' >root/rules.yaml
    if mkfifo root/fifo.yaml 2>/dev/null; then
        echo '  - fifo.yaml' >>root/rules.yaml
    fi
    names_schema secret >root/s.knowable.yaml
    run escape check --rulebook root/rules.yaml root/s.knowable.yaml
    expect_rc 2
    for line in 3 4 5 6 7 8; do
        expect_grep "^root/rules.yaml:$line:5: error: .*\[include-refused\]\$" escape.out "escape: line $line not refused"
    done
    if [ -p root/fifo.yaml ]; then
        expect_grep '^root/rules.yaml:9:5: error: .*not a regular file \[include-refused\]$' escape.out \
            "escape: the FIFO is not refused"
    fi
    grep -q -e secret -e 'Name:' escape.out && fail "escape: a file outside the root was read"
    # A missing file outside the root is refused as outside, not as missing.
    printf '%s\n' 'knowable_rulebook: 1' 'extends: [../outside/nothere.yaml, nothere.yaml]' >root/missing.yaml
    run missing check --rulebook root/missing.yaml root/s.knowable.yaml
    expect_rc 2
    expect_grep "^root/missing.yaml:2:[0-9]*: error: extends '../outside/nothere.yaml' is refused: it leaves the root" \
        missing.out "missing: a missing file outside the root is not refused as outside"
    expect_grep "^root/missing.yaml:2:[0-9]*: error: extends 'nothere.yaml' is refused: no such file" \
        missing.out "missing: a missing file inside the root is not said to be missing"
}

case_names_patterns() {
    # 10,000 names entries through an alias (70 KB): the combined
    # alternation was grown with kn_printf one entry at a time (1.6 GB,
    # 19 s); 50,000 were killed by the kernel.
    {
        echo 'knowable_rulebook: 1'
        echo 'names:'
        echo "  - &a {pattern: '(?i)(^|_)(total|final)(_|\$)', why: totals}"
        awk 'BEGIN { for (i = 1; i < 10000; i++) print "  - *a" }'
    } >many.yaml
    names_schema total_cost weight >s.knowable.yaml
    run many check --rulebook many.yaml s.knowable.yaml
    expect_rc 0
    expect_grep "^s.knowable.yaml:[0-9]*:[0-9]*: warning: feature 'total_cost' .*\[suspicious-name\]" many.out \
        "many: the pattern does not fire"
    {
        echo 'knowable_rulebook: 1'
        echo 'names:'
        echo "  - &a {pattern: '(?i)(^|_)(total|final)(_|\$)', why: totals}"
        awk 'BEGIN { for (i = 1; i < 50000; i++) print "  - *a" }'
    } >more.yaml
    run more check --rulebook more.yaml s.knowable.yaml
    expect_rc 2
    expect_grep "^more.yaml:[0-9]*:[0-9]*: error: more than 20000 'names' entries .*\[schema-shape\]" more.out \
        "more: no positioned error for too many entries"
    # Patterns whose meaning changes inside an alternation: (*COMMIT) ends
    # the whole match, (?1) names another group once numbers shift.
    printf '%s\n' 'knowable_rulebook: 1' 'names:' "  - {pattern: 'a(*COMMIT)b', why: committed}" \
        "  - {pattern: 'ac', why: plain after commit}" "  - {pattern: '(y)', why: a group first}" \
        "  - {pattern: '^(x)(?1)\$', why: recursion by number}" >verbs.yaml
    names_schema ac xx >v.knowable.yaml
    run verbs check --rulebook verbs.yaml v.knowable.yaml
    expect_rc 0
    for c in ac xx; do
        expect_grep "warning: feature '$c' .*\[suspicious-name\]" verbs.out "verbs: '$c' is not found"
    done
}

case_pattern_budget() {
    # '^(a|aa)+$' against 26 a's and a b stays under the per-match limit
    # but costs about 5 ms a value: 20,000 rows took 100 s, with no
    # diagnostic.  Each pattern now has a total budget of matching time.
    printf '%s\n' 'knowable: 1' 'dataset: d' 'prediction: {moment: x, target: t}' 'events: {x: {}, y: {after: x}}' \
        'columns:' '  t: {role: target, known: y, type: boolean}' "  shelf_mark: {known: x, format: '^(a|aa)+\$'}" \
        >format.knowable.yaml
    { echo 't,shelf_mark'; awk 'BEGIN { for (r = 0; r < 20000; r++) print "true,aaaaaaaaaaaaaaaaaaaaaaaaaab" }'; } >big.csv
    run format check --data big.csv format.knowable.yaml
    expect_rc 1
    expect_grep '^format.knowable.yaml:7:34: error: .*spent its total matching time.*\[bad-pattern\]$' format.out \
        "format: no positioned bad-pattern for the spent budget"
    expect_grep '^big.csv:[0-9]*: note: on this row' format.out "format: no note at the row where it stopped"
    # The same pattern in a rulebook, against 3,000 descriptions (14 s before).
    printf '%s\n' 'knowable_rulebook: 1' 'names:' "  - {pattern: '^(a|aa)+\$', applies_to: description, why: slow}" \
        >slow.yaml
    awk 'BEGIN {
        print "knowable: 1\ndataset: d\nprediction: {moment: x, target: t, label_known: y}\nevents: {x: {}, y: {after: x}}"
        print "sources: {s: {kind: internal}}\ncolumns:\n  t: {role: target, known: y}"
        for (i = 0; i < 3000; i++) printf "  c%d: {known: x, source: s, description: aaaaaaaaaaaaaaaaaaaaaaaaaab}\n", i
    }' >desc.knowable.yaml
    run names check --rulebook slow.yaml desc.knowable.yaml
    expect_rc 1
    n=$(grep -c 'error: the rulebook pattern .* is no longer matched, from .*\[bad-pattern\]$' names.out)
    [ "$n" = 1 ] || fail "names: $n reports of the spent pattern, expected 1"
    expect_grep '^slow.yaml:3:[0-9]*: note: the pattern is defined here; it is not matched against this or any later' \
        names.out "names: no note at the pattern"
}

case_include_cache() {
    # 100 schemas that include one register of 3,000 events (400 KB): the
    # register was parsed once per schema and every tree kept to the end
    # (675 MB, 7 s; 200 schemas and a 1 MB register: 8 GB).  It is parsed
    # once per run now; the run must fit in 500 MB of address space, where
    # the old one ran out of memory.
    awk 'BEGIN {
        print "knowable: 1\nevents:\n  reg_event_number_0: {description: first}"
        for (i = 1; i < 3000; i++)
            printf "  reg_event_number_%d: {after: {reg_event_number_%d: [PT1H, P2D]}, description: register event %d}\n", i, i - 1, i
    }' >register.yaml
    i=0
    while [ $i -lt 100 ]; do
        i=$((i + 1))
        printf '%s\n' 'knowable: 1' "dataset: d$i" 'include: [register.yaml]' \
            'prediction: {moment: reg_event_number_5, target: t, label_known: reg_event_number_9}' 'columns:' \
            '  t: {role: target, known: reg_event_number_9}' "  f$i: {known: reg_event_number_3}" \
            "  g$i: {known: reg_event_number_2999}" >s$i.knowable.yaml
    done
    limit=
    # A sanitizer build reserves terabytes of shadow memory: no cap then.
    if (ulimit -v 500000 && "$knowable" --version) >/dev/null 2>&1; then
        limit=500000
    fi
    if [ -n "$limit" ]; then
        ulimit -v $limit
    fi
    run many check s*.knowable.yaml
    expect_rc 1
    expect_grep 'in 100 schemas$' many.out "many: not every schema was checked${limit:+ within $limit KB}"
    n=$(grep -c "error: column 'g[0-9]*' .*\[after-moment\]" many.out)
    [ "$n" = 100 ] || fail "many: $n after-moment findings, expected one per schema"
}

case_minor_inputs() {
    base() {
        printf '%s\n' "knowable: $1" 'dataset: d' 'prediction: {moment: x, target: t, label_known: y}' \
            'events: {x: {}, y: {after: x}}' 'sources: {s: {kind: internal}}' 'columns:' '  t: {role: target, known: y}'
    }
    # split.folds of -1 and 0 were accepted.
    for f in -1 0; do
        { base 1; echo "  w: {known: x, source: s}"; echo "split: {method: random, folds: $f}"; } >folds$f.knowable.yaml
        run folds$f check folds$f.knowable.yaml
        expect_rc 1
        expect_grep "^folds$f.knowable.yaml:9:32: error: 'folds' of the split must be at least 2; found $f \[schema-shape\]\$" \
            folds$f.out "folds $f: not refused at the value"
    done
    # knowable: "1" said that version 1 is not supported when 1 is.
    base '"1"' >quoted.knowable.yaml
    run quoted check quoted.knowable.yaml
    expect_rc 1
    expect_grep '^quoted.knowable.yaml:1:11: error: the format version must be the number 1, not the quoted string "1"' \
        quoted.out "quoted: the message does not say the version is quoted"
    # JSON and SARIF carried U+202E and C1 controls raw.
    { base 1; printf '  %s: {known: y, source: s}\n' '"total\u202ecost\u0085"'; } >bidi.knowable.yaml
    for fmt in json sarif; do
        run $fmt check --format $fmt bidi.knowable.yaml
        expect_rc 0
        if LC_ALL=C grep -q -e "$(printf '\342\200\256')" -e "$(printf '\302\205')" $fmt.out; then
            fail "$fmt: a raw bidirectional or C1 control"
        fi
        expect_grep 'total\\u202ecost\\u0085' $fmt.out "$fmt: the controls are not escaped as \\u202e and \\u0085"
    done
    # check took other commands' options silently.
    base 1 >plain.knowable.yaml
    run svg check --svg picture.svg plain.knowable.yaml
    expect_rc 2
    expect_grep 'check does not take --svg' svg.err "svg: no usage error"
    [ -e picture.svg ] && fail "svg: check wrote a picture"
}

case_documents_wide_lists() {
    # A column derived from 20,000 inputs and an event first of 20,000: the
    # timeline's documents built each list name by name (124 s and 16 GB for
    # the derived list alone); they now name the first 12 and count the
    # rest.  So does check's message for a one_of column (it appended name
    # by name: 12 s and 1.9 GB at 20,000 members).
    awk 'BEGIN {
        n = 20000
        print "knowable: 1\ndataset: parcels\nprediction: {moment: m, target: late}\nevents:\n  m: {}"
        print "  after_m: {after: {m: PT1H}}"
        for (i = 0; i < n; i++) printf "  e%d: {before: {m: PT1H}}\n", i
        printf "  settled:\n    first_of: ["
        for (i = 0; i < n; i++) printf "%se%d", i ? ", " : "", i
        print "]\ncolumns:\n  late: {role: target, known: settled}"
        for (i = 0; i < n; i++) printf "  input_%d: {known: e%d}\n", i, i
        printf "  wide_sum:\n    derived_from: ["
        for (i = 0; i < n; i++) printf "%sinput_%d", i ? ", " : "", i
        printf "]\n  wide_stamp:\n    known: {one_of: [after_m"
        for (i = 0; i < n; i++) printf ", e%d", i
        print "]}"
    }' >wide.knowable.yaml
    run wide timeline --svg wide.svg wide.knowable.yaml
    expect_rc 0
    expect_grep 'wide_sum .*derived from input_0, input_1, .*input_11, and 19988 more$' wide.out \
        "the derived list is not counted"
    expect_grep 'known at one of after_m | e0 | .* | e10 | and 19989 more' wide.out "the one_of list is not counted"
    expect_grep 'first of e0 | e1 | .* | e11 | and 19988 more' wide.out "the first_of list is not counted"
    at_most 20000000 wide.svg
    at_most 20000000 wide.out
    run register sources wide.knowable.yaml
    expect_rc 0
    run wide-check check wide.knowable.yaml
    expect_rc 0 # a warning: some members come after the moment
    expect_grep "known at one of 'after_m', 'e0', .*'e10' and 19989 more" wide-check.out \
        "check's one_of list is not counted"
    at_most 20000000 wide-check.out
}

fn=case_$(echo "$case" | tr - _)
command -v "$fn" >/dev/null 2>&1 || { echo "no case '$case'"; exit 1; }
"$fn"
if [ "$fails" != 0 ]; then
    echo "$case: $fails failures"
    exit 1
fi
echo "$case: passed"
exit 0
