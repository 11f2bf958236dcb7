#!/bin/sh
# tests/fuzz/run.sh BUILD [SECONDS] [HARNESS...] - runs the libFuzzer
# harnesses of a fuzz build one after the other, each for SECONDS (default
# 600), under nice -n 19 and on one core.  The build is made with
#   CC=clang meson setup BUILD -Dfuzz=true -Db_sanitize=address,undefined -Db_lundef=false
#   ninja -C BUILD
# Corpora grow in BUILD/fuzz-corpus/<harness> (seeded from tests/fuzz/seeds,
# the golden cases, the demo and the built-in rulebook); crashes land in
# BUILD/fuzz-artifacts/<harness>.  Keep a crashing input under
# tests/fuzz/regress/<harness>/ once fixed: the ordinary test run replays it.
# Prints one line per harness: runs, coverage, and any artifact found.
set -u
build=${1:?usage: tests/fuzz/run.sh BUILD [SECONDS] [HARNESS...]}
secs=${2:-600}
shift; [ $# -gt 0 ] && shift
src=$(cd "$(dirname "$0")/../.." && pwd)
harnesses=${*:-check rulebook csv duration escape lsp}
status=0
for h in $harnesses; do
    exe=$build/tests/fuzz/fuzz_$h
    [ -x "$exe" ] || { echo "$h: no $exe (build with -Dfuzz=true)"; status=1; continue; }
    corpus=$build/fuzz-corpus/$h
    art=$build/fuzz-artifacts/$h
    mkdir -p "$corpus" "$art"
    [ -d "$src/tests/fuzz/seeds/$h" ] && cp -n "$src/tests/fuzz/seeds/$h"/* "$corpus"/ 2>/dev/null
    [ -d "$src/tests/fuzz/regress/$h" ] && cp -n "$src/tests/fuzz/regress/$h"/* "$corpus"/ 2>/dev/null
    dict=""
    case $h in
    check)
        find "$src/tests/cases" "$src/examples" -name '*.yaml' | while read -r f; do
            cp -n "$f" "$corpus/$(echo "$f" | tr / _)"
        done
        dict=-dict=$src/tests/fuzz/schema.dict ;;
    rulebook)
        cp -n "$src/rules/default.yaml" "$corpus/default.yaml"
        dict=-dict=$src/tests/fuzz/schema.dict ;;
    esac
    log=$build/fuzz-$h.log
    ASAN_OPTIONS=detect_leaks=1:allocator_may_return_null=1 UBSAN_OPTIONS=halt_on_error=1:print_stacktrace=1 \
        nice -n 19 "$exe" $dict -max_total_time="$secs" -max_len=65536 -timeout=10 -rss_limit_mb=2048 \
        -artifact_prefix="$art/" -print_final_stats=1 "$corpus" >"$log" 2>&1
    rc=$?
    runs=$(sed -n 's/^stat::number_of_executed_units: *//p' "$log" | tail -n 1)
    cov=$(grep -o 'cov: [0-9]*' "$log" | tail -n 1)
    found=$(ls "$art" | tr '\n' ' ')
    echo "$h: exit $rc, ${runs:-?} runs in ${secs}s, $cov, corpus $(ls "$corpus" | wc -l) inputs${found:+, ARTIFACTS: $found}"
    [ "$rc" = 0 ] || status=1
done
exit $status
