#!/usr/bin/python3
"""lsp_bench.py KNOWABLE [RUNS] - the language server's answer to a change
(SPEC §8: fresh diagnostics for a 1,000-column schema in under 20 ms).

Generates the benchmark schema of gen_schema.py with 1,000 columns, 300
events and 100 sources, with about a tenth of the columns made late (so
every change publishes diagnostics with their notes), starts `knowable lsp`, opens it, then sends RUNS
edits (default 50), each a full-text didChange that renames the description
(so every run is a real re-analysis of a new text), and measures the wall
time from writing the change to having read the whole publishDiagnostics
message for the schema, and the server's CPU time per change.  Also the server's resident memory (VmRSS, Linux)
after the first 100 edits and after EDITS (default 10,000, BENCH_EDITS) to
see that memory does not grow with edits.  Prints the median, the minimum
and the 90th percentile; asserts nothing (a benchmark, not a test).
"""
import json
import os
import re
import statistics
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))


def frame(obj):
    data = json.dumps(obj).encode()
    return b"Content-Length: %d\r\n\r\n" % len(data) + data


def read_message(f):
    length = None
    while True:
        line = f.readline()
        if not line:
            raise EOFError
        line = line.strip()
        if not line:
            break
        k, _, v = line.partition(b":")
        if k.lower() == b"content-length":
            length = int(v)
    return f.read(length)


def rss_kib(pid):
    try:
        with open(f"/proc/{pid}/status") as f:
            for line in f:
                if line.startswith("VmRSS:"):
                    return int(line.split()[1])
    except OSError:
        pass
    return None


def cpu_seconds(pid):
    """User + system CPU time of a process so far (Linux /proc)."""
    with open(f"/proc/{pid}/stat") as f:
        fields = f.read().rsplit(")", 1)[1].split()
    return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")


def main():
    knowable = os.path.abspath(sys.argv[1])
    runs = int(sys.argv[2]) if len(sys.argv) > 2 else 50
    edits = int(os.environ.get("BENCH_EDITS", "10000"))
    with tempfile.TemporaryDirectory() as tmp:
        path = os.path.join(tmp, "rental.knowable.yaml")
        subprocess.run([sys.executable, os.path.join(HERE, "gen_schema.py"), "1000", "300", "100", path], check=True)
        with open(path) as f:
            text = f.read()
        # About a tenth of the columns late, as in SPEC §8's check benchmark:
        # every tenth column known at an event is moved to ev_200 (the
        # moment is ev_150), so each change publishes real findings.
        head, cols = text.split("\ncolumns:\n", 1)
        parts = re.split(r"(    known: ev_\d{3}\n)", cols)
        k = 0
        for i in range(1, len(parts), 2):
            if k % 10 == 5:
                parts[i] = "    known: ev_200\n"
            k += 1
        text = head + "\ncolumns:\n" + "".join(parts)
        with open(path, "w") as f:
            f.write(text)
        uri = "file://" + path
        p = subprocess.Popen([knowable, "lsp"], stdin=subprocess.PIPE, stdout=subprocess.PIPE, cwd=tmp)
        send = lambda o: (p.stdin.write(frame(o)), p.stdin.flush())
        send({"jsonrpc": "2.0", "id": 1, "method": "initialize", "params": {"capabilities": {}}})
        read_message(p.stdout)
        send({"jsonrpc": "2.0", "method": "textDocument/didOpen",
              "params": {"textDocument": {"uri": uri, "languageId": "yaml", "version": 1, "text": text}}})
        first = json.loads(read_message(p.stdout))
        n_diags = len(first["params"]["diagnostics"])
        marker = "description: generated benchmark schema"

        def change(v):
            new = text.replace(marker, marker + " (edit %d)" % v, 1)
            msg = frame({"jsonrpc": "2.0", "method": "textDocument/didChange",
                         "params": {"textDocument": {"uri": uri, "version": v},
                                    "contentChanges": [{"text": new}]}})
            t0 = time.perf_counter()
            p.stdin.write(msg)
            p.stdin.flush()
            body = read_message(p.stdout)
            t1 = time.perf_counter()
            if b"publishDiagnostics" not in body:
                raise SystemExit("unexpected answer: %r" % body[:200])
            return t1 - t0

        cpu0 = cpu_seconds(p.pid)
        times = [change(v) for v in range(2, runs + 2)]
        cpu = (cpu_seconds(p.pid) - cpu0) / runs
        rss_early = None
        rss_late = None
        v = runs + 2
        for i in range(edits):
            change(v)
            v += 1
            if i == 99:
                rss_early = rss_kib(p.pid)
        rss_late = rss_kib(p.pid)
        send({"jsonrpc": "2.0", "id": 2, "method": "shutdown"})
        read_message(p.stdout)
        send({"jsonrpc": "2.0", "method": "exit"})
        p.wait(timeout=30)
    ms = sorted(t * 1000 for t in times)
    print("lsp change -> diagnostics, 1,000 columns / 300 events / 100 sources (%d bytes, %d diagnostics published)"
          % (len(text.encode()), n_diags))
    print("  %d runs: median %.2f ms, min %.2f ms, p90 %.2f ms (target: under 20 ms)"
          % (runs, statistics.median(ms), ms[0], ms[int(len(ms) * 0.9) - 1]))
    print("  server CPU time per change: %.2f ms (user + system over the %d runs; the wall time above includes"
          " waiting for a core on a loaded machine)" % (cpu * 1000, runs))
    if rss_early and rss_late:
        print("  server memory (VmRSS): %d KiB after 100 edits, %d KiB after %d edits" % (rss_early, rss_late, edits))


if __name__ == "__main__":
    main()
