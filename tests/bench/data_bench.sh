#!/bin/sh
# data_bench.sh KNOWABLE [SIZE_MB] [FOLDER] - times `knowable check --data` against
# the straightforward pandas + scikit-learn script (tests/bench/data_pandas.py)
# on a generated, seeded 50-column CSV (tests/bench/make_data_bench.py; default
# 200 MB, kept in FOLDER, default ${TMPDIR:-/tmp}/knowable-data-bench, and
# reused while its size matches).  Reports wall and CPU time, MB/s, peak memory
# and the ratio (SPEC §8: >= 150 MB/s on one core, >= 10x faster than pandas).
# Timings are reported, never asserted.  Exit 77 when numpy, pandas,
# scikit-learn or PyYAML is missing.
#
#   meson compile -C build && tests/bench/data_bench.sh build/knowable
#
# Use a release build (meson setup -Dbuildtype=release) for figures worth
# quoting, on an otherwise idle machine.
set -eu
bin=$(cd "$(dirname "$1")" && pwd)/$(basename "$1")
size=${2:-200}
dir=${3:-${TMPDIR:-/tmp}/knowable-data-bench}
here=$(cd "$(dirname "$0")" && pwd)
py=/usr/bin/python3
[ -x "$py" ] || { echo "skipped: no /usr/bin/python3"; exit 77; }
mkdir -p "$dir"
csv=$dir/parcels-$size.csv
schema=$dir/parcels.knowable.yaml
if [ ! -f "$csv" ] || [ ! -f "$schema" ]; then
    "$py" "$here/make_data_bench.py" "$csv" "$schema" "$size" || exit $?
fi
"$py" -c 'import numpy, pandas, sklearn, yaml' 2>/dev/null || { echo "skipped: numpy, pandas, scikit-learn or PyYAML missing"; exit 77; }

# Runs a command (output discarded) and prints "wall cpu peak_kib" of it.
measure() {
    "$py" - "$@" <<'EOF'
import resource, subprocess, sys, time
t = time.monotonic()
rc = subprocess.call(sys.argv[1:], stdout=subprocess.DEVNULL)
wall = time.monotonic() - t
ru = resource.getrusage(resource.RUSAGE_CHILDREN)
if rc not in (0, 1):
    sys.exit("command failed with status %d: %s" % (rc, " ".join(sys.argv[1:])))
print("%.3f %.3f %d" % (wall, ru.ru_utime + ru.ru_stime, ru.ru_maxrss))
EOF
}

mb=$("$py" -c 'import os, sys; print("%.1f" % (os.path.getsize(sys.argv[1]) / 1e6))' "$csv")
cat "$csv" > /dev/null # warm the page cache for both runs
set -- $(measure "$bin" check -q --fail-on never --data "$csv" "$schema")
kw=$1 kc=$2 km=$3
set -- $(measure "$py" "$here/data_pandas.py" "$schema" "$csv")
pw=$1 pc=$2 pm=$3
"$py" - "$mb" "$kw" "$kc" "$km" "$pw" "$pc" "$pm" <<'EOF'
import sys
mb, kw, kc, km, pw, pc, pm = map(float, sys.argv[1:])
print("data file: %.1f MB, 50 columns" % mb)
print("knowable check --data: %6.2f s wall (%6.1f MB/s), %6.2f s CPU (%6.1f MB/s), peak %5.0f MiB"
      % (kw, mb / kw, kc, mb / kc, km / 1024))
print("pandas + scikit-learn: %6.2f s wall (%6.1f MB/s), %6.2f s CPU (%6.1f MB/s), peak %5.0f MiB"
      % (pw, mb / pw, pc, mb / pc, pm / 1024))
print("ratio: %.1fx faster (wall), %.1fx (CPU); targets: >= 150 MB/s, >= 10x" % (pw / kw, pc / kc))
EOF
