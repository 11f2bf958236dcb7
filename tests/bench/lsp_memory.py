#!/usr/bin/python3
"""lsp_memory.py KNOWABLE [EDITS] - the language server's memory over many
edits (SPEC §8: memory does not grow over 10,000 edits).

Opens the benchmark schema of lsp_bench.py (1,000 columns, 300 events, 100
sources, a tenth of the columns late) in one `knowable lsp` process and
sends EDITS full-text changes (default 10,000), waiting for the diagnostics
of each.  The edits vary what the server keeps: the description grows a
number, and every other edit also moves one more column past the moment and
back (so the number of findings, notes and published bytes changes from one
edit to the next); every tenth edit asks for a hover and a completion too.
After edit 100, 1,000, 2,000, ... 10,000 (and EDITS) it reads the
server's VmRSS (resident now) and VmHWM (the peak so far) from
/proc/PID/status; then, when gdb is installed (BENCH_HEAP=0 turns it off),
a second server goes through the same edits and at the same points gives
the bytes its malloc holds in use (glibc's malloc_stats, called in the
server through gdb): what the server keeps, apart from what the allocator
keeps around.  Prints them; asserts nothing (a benchmark, not a test).
"""
import json
import os
import re
import shutil
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import lsp_bench  # noqa: E402


def heap_in_use(pid, err_path):
    """The 'in use bytes' of glibc's malloc_stats in process pid (its
    standard error is err_path), or None without gdb."""
    if os.environ.get("BENCH_HEAP") == "0" or not shutil.which("gdb"):
        return None
    before = os.path.getsize(err_path)
    r = subprocess.run(["gdb", "-p", str(pid), "-batch", "-nx", "-ex", "call (void) malloc_stats()"],
                       stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, timeout=120)
    with open(err_path, "rb") as f:
        f.seek(before)
        text = f.read().decode("utf-8", "replace")
    m = re.findall(r"in use bytes\s*=\s*(\d+)", text)
    return int(m[-1]) if r.returncode == 0 and m else None


def one_pass(knowable, edits, marks, heap):
    """One server through the edits: at open and at each mark, (label,
    /proc status, malloc bytes in use or None)."""
    with tempfile.TemporaryDirectory() as tmp:
        path, text = lsp_bench.bench_schema(tmp)
        uri = "file://" + path
        err_path = os.path.join(tmp, "server.err")
        with open(err_path, "wb") as err:
            srv = lsp_bench.Server(knowable, tmp, stderr=err)
            n0 = srv.open(uri, text)
            probe = (lambda: heap_in_use(srv.p.pid, err_path)) if heap else (lambda: None)
            rows = [("open", lsp_bench.proc_status(srv.p.pid), probe())]
            # A column known well before the moment, to move past it and back.
            early = "    known: ev_010\n"
            if early not in text:
                raise SystemExit("the benchmark schema has no column known at ev_010")
            line_of_known = text[:text.index(early)].count("\n")
            counts = set()
            for i in range(1, edits + 1):
                t = lsp_bench.edited(text, i)
                if i % 2:
                    t = t.replace(early, "    known: ev_290\n", 1)
                _, _, body = srv.change(uri, i + 1, t)
                counts.add(len(json.loads(body)["params"]["diagnostics"]))
                if i % 10 == 0:
                    pos = {"textDocument": {"uri": uri}, "position": {"line": line_of_known, "character": 14}}
                    srv.send({"jsonrpc": "2.0", "id": 10 + i, "method": "textDocument/hover", "params": pos})
                    lsp_bench.read_message(srv.p.stdout)
                    srv.send({"jsonrpc": "2.0", "id": 11 + i, "method": "textDocument/completion", "params": pos})
                    lsp_bench.read_message(srv.p.stdout)
                if i in marks:
                    rows.append(("edit %d" % i, lsp_bench.proc_status(srv.p.pid), probe()))
            srv.close()
    return n0, counts, rows


def main():
    knowable = os.path.abspath(sys.argv[1])
    edits = int(sys.argv[2]) if len(sys.argv) > 2 else 10000
    marks = {100, edits} | set(range(1000, edits + 1, 1000))
    # Two passes: gdb attaching to a process makes pages of it resident, so
    # the resident sizes come from a pass without it.
    n0, counts, rows = one_pass(knowable, edits, marks, False)
    heap = [None] * len(rows)
    if os.environ.get("BENCH_HEAP") != "0" and shutil.which("gdb"):
        heap = [h for _, _, h in one_pass(knowable, edits, marks, True)[2]]
    print("lsp memory over %d edits of the 1,000-column schema (%d diagnostics at open; %s per edit)"
          % (edits, n0, " or ".join(str(c) for c in sorted(counts))))
    print("  %-12s %10s %10s %16s" % ("after", "VmRSS KiB", "VmHWM KiB", "malloc in use B"))
    for (label, st, _), h in zip(rows, heap):
        print("  %-12s %10d %10d %16s" % (label, st["VmRSS"], st["VmHWM"], h if h is not None else "n/a"))


if __name__ == "__main__":
    main()
