#!/usr/bin/python3
"""bench.py KNOWABLE BARE_PARSE OUTDIR GEN_SCHEMA TIMELINE_BENCH - the body
of tests/bench/run.sh (see there), measuring what SPEC §8 says: whole
processes, side by side in one run.

For each size, a schema of that many columns (300 events, 100 sources, a
consistent timeline, a tenth of the columns known after the moment) is
checked with the whole text report written to a file, and the same file is
read by the bare libyaml parse (the floor), by tree_only (knowable's tree
alone) and by document_load (libyaml's own tree, yaml_parser_load: a peer,
what a checker built on libyaml's document API would pay before checking
anything), the last two when built.  The commands take turns,
RUNS times each (BENCH_RUNS, default 11), after a warm-up of each, so a
burst of load on the machine hits them all.  Reported: the median wall time
(time.perf_counter), the median CPU time (user + system of the child,
resource.getrusage) and the peak resident set of each, and their ratios.
Instruction counts (valgrind --tool=callgrind, BENCH_CALLGRIND=0 skips them)
are a diagnostic column, not the measure."""
import os
import resource
import shutil
import statistics
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
    return wall, cpu


def peak_rss_kib(cmd):
    """The peak resident set, from GNU time (a small C parent: a fork of
    this Python process would count Python's own pages); None without it."""
    if not os.access("/usr/bin/time", os.X_OK):
        return None
    p = subprocess.run(["/usr/bin/time", "-f", "%M"] + cmd, stdout=subprocess.DEVNULL,
                       stderr=subprocess.PIPE, text=True, check=False)
    return int(p.stderr.strip().splitlines()[-1])


def side_by_side(cmds, runs):
    """Each command once to warm up, then all in turn RUNS times; the
    (median wall, median CPU) of each."""
    for c in cmds:
        run_once(c)
    rs = [[] for _ in cmds]
    for _ in range(runs):
        for c, r in zip(cmds, rs):
            r.append(run_once(c))
    med = lambda r, i: statistics.median(x[i] for x in r)
    return [(med(r, 0), med(r, 1)) for r in rs]


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
    extra = lambda i: sys.argv[i] if len(sys.argv) > i and os.access(sys.argv[i], os.X_OK) else None
    tree, document = extra(6), extra(7)
    sizes = [int(s) for s in os.environ.get("BENCH_SIZES", "1000 10000 100000").split()]
    runs = int(os.environ.get("BENCH_RUNS", "11"))
    rows = []
    for n in sizes:
        path = os.path.join(outdir, "bench-%d.knowable.yaml" % n)
        report = os.path.join(outdir, "bench-%d.report.txt" % n)
        subprocess.run(["/usr/bin/python3", gen, str(n), "300", "100", path, "10"], check=True)
        check_cmd = [knowable, "check", "--color", "never", "--fail-on", "never", "-o", report, "--", path]
        bare_cmd = [bare, path]
        k = runs if n <= 10000 else max(3, runs // 2)
        # The check and the floor side by side, alone: a peer in the same
        # turn changed the check's figure.  On the build machine (a virtual
        # machine that hands freed memory back to its host) a check run
        # right after libyaml's document load, which frees some 60 MiB,
        # took 64 ms of CPU at 10,000 columns instead of 40 ms, as every
        # page it touched had to come back from the host.  Each peer is
        # measured beside the floor in a turn of its own.
        (kw, kc), (bw, bc) = side_by_side([check_cmd, bare_cmd], k)
        tc = side_by_side([[tree, path], bare_cmd], k)[0][1] if tree else None
        dc = side_by_side([[document, path], bare_cmd], k)[0][1] if document else None
        km, bm = peak_rss_kib(check_cmd), peak_rss_kib(bare_cmd)
        ki = instructions(check_cmd, outdir)
        bi = instructions(bare_cmd, outdir)
        rows.append((n, os.path.getsize(path), os.path.getsize(report), kw, bw, kc, bc, km, bm, ki, bi, tc, dc))
        sys.stderr.write("%d columns done\n" % n)
    print("| columns | file | report | check wall | bare wall | ratio | check CPU | bare CPU | ratio |"
          " tree CPU | ratio | document CPU | check / document | check peak | bare peak |"
          " check instr. | bare instr. | ratio |")
    print("|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|")
    for n, size, rep, kw, bw, kc, bc, km, bm, ki, bi, tc, dc in rows:
        ir = ("%.0fM | %.0fM | %.2f" % (ki / 1e6, bi / 1e6, ki / bi)) if ki and bi else "- | - | -"
        mem = ("%.1f MiB | %.1f MiB" % (km / 1024, bm / 1024)) if km and bm else "- | -"
        tree_cols = ("%.1f ms | %.2f" % (tc * 1e3, tc / bc if bc else 0)) if tc is not None else "- | -"
        tree_cols += (" | %.1f ms | %.2f" % (dc * 1e3, kc / dc if dc else 0)) if dc is not None else " | - | -"
        print("| %d | %.1f MB | %.1f MB | %.1f ms | %.1f ms | **%.2f** | %.1f ms | %.1f ms | **%.2f** | %s | %s | %s |"
              % (n, size / 1e6, rep / 1e6, kw * 1e3, bw * 1e3, kw / bw, kc * 1e3, bc * 1e3,
                 kc / bc if bc else 0, tree_cols, mem, ir))
    print("\nmedians of %d runs each (half at 100,000 columns), the commands in turn; wall and CPU of whole"
          " processes; 'tree' is tests/bench/tree_only.c, knowable's YAML tree and nothing after it;"
          " 'document' is tests/bench/document_load.c, libyaml's yaml_parser_load (a peer, not the floor)" % runs)
    if os.access(timeline_bench, os.X_OK):
        print("\ntimeline solver (%s):\n" % timeline_bench)
        p = subprocess.run([timeline_bench], stdout=subprocess.PIPE, text=True, check=False)
        print(p.stdout)


if __name__ == "__main__":
    main()
