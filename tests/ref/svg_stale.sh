#!/bin/sh
# The README's picture (examples/parcel-delays.svg) is what the current
# build draws for the demo schema; fails when the committed file is stale.
# usage: svg_stale.sh KNOWABLE SCHEMA COMMITTED.svg
# Regenerate from the repository root with:
#   build/knowable timeline --svg examples/parcel-delays.svg -- examples/parcel-delays.knowable.yaml
set -u
exe=$1 schema=$2 committed=$3
tmp=$(mktemp -d) || exit 1
trap 'rm -rf "$tmp"' EXIT
if ! "$exe" timeline --svg "$tmp/now.svg" -- "$schema" >/dev/null; then
    echo "knowable timeline --svg failed"
    exit 1
fi
if ! cmp -s "$tmp/now.svg" "$committed"; then
    echo "$committed is stale: the current build draws a different picture."
    diff "$committed" "$tmp/now.svg" | head -20
    echo "Regenerate it: knowable timeline --svg $committed -- $schema"
    exit 1
fi
echo "$committed is up to date"
