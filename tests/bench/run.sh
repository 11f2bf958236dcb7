#!/bin/sh
# tests/bench/run.sh BUILD - the speed benchmarks of SPEC §8, one command:
# generates schemas of 1,000, 10,000 and 100,000 columns (300 events, 100
# sources, a tenth of the columns late), builds tests/bench/bare_parse.c (a
# bare libyaml event parse), tests/bench/tree_only.c (knowable's own
# tree, nothing after it) and tests/bench/document_load.c (libyaml's own
# tree, a peer) next to BUILD's knowable, and runs `knowable
# check -o REPORT` and the bare parse alternately on each file: medians of
# wall and CPU time of whole processes and peak RSS side by side, with
# instruction counts under valgrind --tool=callgrind as a diagnostic.  Then
# the timeline solver on 100 to 10,000 events (BUILD/tests/timeline_bench)
# when it is built.  Prints a Markdown table.  BENCH_CALLGRIND=0 skips
# callgrind; BENCH_SIZES="1000 10000" picks the sizes; BENCH_RUNS the runs.
set -eu
build=${1:?usage: tests/bench/run.sh BUILD}
here=$(cd "$(dirname "$0")" && pwd)
out=$build/bench
mkdir -p "$out"
cc=${CC:-cc}
# shellcheck disable=SC2046
$cc -O2 -std=c11 -o "$out/bare_parse" "$here/bare_parse.c" $(pkg-config --cflags --libs yaml-0.1)
# libyaml's own tree (yaml_parser_load), a peer beside the floor.
# shellcheck disable=SC2046
$cc -O2 -std=c11 -o "$out/document_load" "$here/document_load.c" $(pkg-config --cflags --libs yaml-0.1)
# The tree alone, from the build's static library (a second floor).
src=$(cd "$here/../.." && pwd)
# shellcheck disable=SC2046
$cc -O2 -std=c11 -D_XOPEN_SOURCE=700 -I"$src/src" -I"$src/include" -I"$build" -o "$out/tree_only" \
    "$here/tree_only.c" "$build/libknowable.a" $(pkg-config --libs yaml-0.1 libpcre2-8) -lm
exec /usr/bin/python3 "$here/bench.py" "$build/knowable" "$out/bare_parse" "$out" "$here/gen_schema.py" \
    "$build/tests/timeline_bench" "$out/tree_only" "$out/document_load"
