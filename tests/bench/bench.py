#!/usr/bin/python3
"""bench.py KNOWABLE BARE_PARSE OUTDIR GEN_SCHEMA TIMELINE_BENCH - the body
of tests/bench/run.sh (see there).  Wall time: the best of several runs
(time.perf_counter); CPU time: user + system of the best run
(resource.getrusage of the child); instructions: valgrind --tool=callgrind's
total Ir, which does not depend on the machine's load."""
import os
import re
import resource
import shutil
import subprocess
import sys
import time


def run_once(cmd):
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    p = subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    if p.returncode not in (0, 1):
        sys.exit("%s exited %d" % (" ".join(cmd), p.returncode))
    return wall, cpu, after.ru_maxrss


def best(cmd, runs):
    results = [run_once(cmd) for _ in range(runs)]
    return min(r[0] for r in results), min(r[1] for r in results)


def instructions(cmd, outdir):
    if os.environ.get("BENCH_CALLGRIND", "1") == "0" or not shutil.which("valgrind"):
        return None
    out = os.path.join(outdir, "callgrind.out")
    subprocess.run(["valgrind", "--tool=callgrind", "--callgrind-out-file=" + out] + cmd,
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=False)
    with open(out) as f:
        for line in f:
            if line.startswith("summary:") or line.startswith("totals:"):
                return int(line.split()[1])
    return None


def main():
    knowable, bare, outdir, gen, timeline_bench = sys.argv[1:6]
    sizes = [int(s) for s in os.environ.get("BENCH_SIZES", "1000 10000 100000").split()]
    rows = []
    for n in sizes:
        path = os.path.join(outdir, "bench-%d.knowable.yaml" % n)
        subprocess.run(["/usr/bin/python3", gen, str(n), "300", "100", path], check=True)
        runs = 9 if n <= 10000 else 5
        check_cmd = [knowable, "check", "--color", "never", path]
        bare_cmd = [bare, path]
        run_once(check_cmd)  # warm the page cache
        kw, kc = best(check_cmd, runs)
        bw, bc = best(bare_cmd, runs)
        ki = instructions(check_cmd, outdir)
        bi = instructions(bare_cmd, outdir)
        rows.append((n, os.path.getsize(path), kw, bw, kc, bc, ki, bi))
        sys.stderr.write("%d columns done\n" % n)
    print("| columns | file | check wall | bare parse wall | ratio | check CPU | bare CPU | ratio |"
          " check instr. | bare instr. | ratio |")
    print("|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|")
    for n, size, kw, bw, kc, bc, ki, bi in rows:
        ir = ("%.0fM | %.0fM | %.2f" % (ki / 1e6, bi / 1e6, ki / bi)) if ki and bi else "- | - | -"
        print("| %d | %.1f MB | %.1f ms | %.1f ms | %.2f | %.1f ms | %.1f ms | %.2f | %s |"
              % (n, size / 1e6, kw * 1e3, bw * 1e3, kw / bw, kc * 1e3, bc * 1e3, kc / bc if bc else 0, ir))
    if len(rows) > 1:
        first, last = rows[0], rows[-1]
        if first[6] and last[6]:
            print("\ninstructions per column: %s" % ", ".join(
                "%d columns %.0f" % (r[0], r[6] / r[0]) for r in rows))
    if os.access(timeline_bench, os.X_OK):
        print("\ntimeline solver (%s):\n" % timeline_bench)
        p = subprocess.run([timeline_bench], stdout=subprocess.PIPE, text=True, check=False)
        print(p.stdout)


if __name__ == "__main__":
    main()
