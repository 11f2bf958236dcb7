#!/usr/bin/python3
"""lsp_bench.py KNOWABLE [CHANGES] - the language server's answer to a change
(SPEC §8: fresh diagnostics for a 1,000-column schema in under 20 ms).

Generates the benchmark schema of gen_schema.py with 1,000 columns, 300
events and 100 sources, with about a tenth of the columns made late (so
every change publishes diagnostics with their notes), starts `knowable lsp`
(one whole server process), opens it, then sends CHANGES edits (default
200), each a full-text didChange that renames the description (so every
change is a real re-analysis of a new text).  For each change it measures

  - wall: from writing the change to having read the whole
    publishDiagnostics message for the schema;
  - CPU: the server's own time on a core for that change, read from
    /proc/PID/schedstat (nanoseconds, user and system), before and after.

Side by side, the same measures for
  - the floor: the same exchange for a document of the same size that is
    not a schema (the same text with its schema keys renamed): framing,
    JSON parsing of the ~96 KB message, keeping the text and publishing an
    empty list, with no analysis;
  - the peer: `knowable check` on the same file, as a whole process (wall
    and the child's user + system CPU from getrusage), RUNS_CHECK times
    (default 20).

Prints medians, minima and 90th percentiles; asserts nothing (a benchmark,
not a test).  The memory over 10,000 edits is lsp_memory.py's.
"""
import json
import os
import re
import resource
import statistics
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
MARKER = "description: generated benchmark schema"


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


def proc_status(pid):
    """VmRSS and VmHWM of a process in KiB (Linux /proc)."""
    out = {}
    with open(f"/proc/{pid}/status") as f:
        for line in f:
            k, _, v = line.partition(":")
            if k in ("VmRSS", "VmHWM"):
                out[k] = int(v.split()[0])
    return out


def cpu_ns(pid):
    """Nanoseconds the process's (single) thread has run on a core so far.
    The kernel adds a running thread's current slice only when it stops,
    so this first waits (a few milliseconds at most) until the server is
    asleep, reading its next message."""
    for _ in range(1000):
        with open(f"/proc/{pid}/stat") as f:
            if f.read().rsplit(")", 1)[1].split()[0] != "R":
                break
        time.sleep(0.00001)
    with open(f"/proc/{pid}/schedstat") as f:
        return int(f.read().split()[0])


def bench_schema(folder):
    """Writes the benchmark schema into folder; returns (path, text)."""
    path = os.path.join(folder, "rental.knowable.yaml")
    subprocess.run([sys.executable, os.path.join(HERE, "gen_schema.py"), "1000", "300", "100", path], check=True)
    with open(path) as f:
        text = f.read()
    # About a tenth of the columns late, as in SPEC §8's check benchmark:
    # every tenth column known at an event is moved to ev_200 (the moment
    # is ev_150), so each change publishes real findings.
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
    return path, text


class Server:
    """One `knowable lsp` process, initialized."""

    def __init__(self, knowable, cwd, stderr=None):
        self.p = subprocess.Popen([knowable, "lsp"], stdin=subprocess.PIPE, stdout=subprocess.PIPE, cwd=cwd,
                                  stderr=stderr)
        self.send({"jsonrpc": "2.0", "id": 1, "method": "initialize", "params": {"capabilities": {}}})
        read_message(self.p.stdout)
        self.send({"jsonrpc": "2.0", "method": "initialized", "params": {}})

    def send(self, obj):
        self.p.stdin.write(frame(obj))
        self.p.stdin.flush()

    def open(self, uri, text):
        """Opens a document; returns the number of diagnostics published for it."""
        self.send({"jsonrpc": "2.0", "method": "textDocument/didOpen",
                   "params": {"textDocument": {"uri": uri, "languageId": "yaml", "version": 1, "text": text}}})
        msg = json.loads(read_message(self.p.stdout))
        return len(msg["params"]["diagnostics"])

    def change(self, uri, version, text):
        """One full-text change; returns (wall seconds, server CPU ns, the answer's bytes)."""
        msg = frame({"jsonrpc": "2.0", "method": "textDocument/didChange",
                     "params": {"textDocument": {"uri": uri, "version": version},
                                "contentChanges": [{"text": text}]}})
        c0 = cpu_ns(self.p.pid)
        t0 = time.perf_counter()
        self.p.stdin.write(msg)
        self.p.stdin.flush()
        body = read_message(self.p.stdout)
        t1 = time.perf_counter()
        c1 = cpu_ns(self.p.pid)
        if b"publishDiagnostics" not in body or uri.encode() not in body:
            raise SystemExit("unexpected answer: %r" % body[:200])
        return t1 - t0, c1 - c0, body

    def close(self):
        self.send({"jsonrpc": "2.0", "id": 2, "method": "shutdown"})
        read_message(self.p.stdout)
        self.send({"jsonrpc": "2.0", "method": "exit"})
        self.p.wait(timeout=30)


def edited(text, v):
    return text.replace(MARKER, MARKER + " (edit %d)" % v, 1)


def summary(label, xs, unit_scale, unit):
    xs = sorted(x * unit_scale for x in xs)
    return "  %-34s median %7.2f %s, min %7.2f, p90 %7.2f" % (
        label, statistics.median(xs), unit, xs[0], xs[max(0, int(len(xs) * 0.9) - 1)])


def main():
    knowable = os.path.abspath(sys.argv[1])
    changes = int(sys.argv[2]) if len(sys.argv) > 2 else 200
    runs_check = int(os.environ.get("RUNS_CHECK", "20"))
    with tempfile.TemporaryDirectory() as tmp:
        path, text = bench_schema(tmp)
        # The floor: the same bytes, not a schema (no top-level key that
        # only a schema has), so the server publishes an empty list.
        floor_text = re.sub(r"^(dataset|prediction|columns|pipeline|split):", r"x\1:", text, flags=re.M)
        floor_path = os.path.join(tmp, "not-a-schema.yaml")
        # Two servers, one document each (a server re-checks every open
        # schema on a change), changed in turn so both see the same load.
        srv, floor = Server(knowable, tmp), Server(knowable, tmp)
        uri, floor_uri = "file://" + path, "file://" + floor_path
        n_diags = srv.open(uri, text)
        floor.open(floor_uri, floor_text)
        wall, cpu, wall_f, cpu_f = [], [], [], []
        answer = 0
        v = 2
        for i in range(changes):
            w, c, body = srv.change(uri, v, edited(text, v))
            wall.append(w)
            cpu.append(c)
            answer = len(body)
            w, c, _ = floor.change(floor_uri, v, edited(floor_text, v))
            wall_f.append(w)
            cpu_f.append(c)
            v += 1
        mem = proc_status(srv.p.pid)
        srv.close()
        floor.close()
        # The peer: a whole `knowable check` process per run.
        wall_c, cpu_c = [], []
        for i in range(runs_check):
            r0 = resource.getrusage(resource.RUSAGE_CHILDREN)
            t0 = time.perf_counter()
            subprocess.run([knowable, "check", path], stdout=subprocess.DEVNULL, cwd=tmp)
            t1 = time.perf_counter()
            r1 = resource.getrusage(resource.RUSAGE_CHILDREN)
            wall_c.append(t1 - t0)
            cpu_c.append((r1.ru_utime + r1.ru_stime) - (r0.ru_utime + r0.ru_stime))
    print("lsp change -> diagnostics, 1,000 columns / 300 events / 100 sources")
    print("  (%d bytes of schema, %d diagnostics, a %d-byte publishDiagnostics per change; %d changes)"
          % (len(text.encode()), n_diags, answer, changes))
    print(summary("server CPU per change", cpu, 1e-6, "ms"))
    print(summary("wall, change -> diagnostics", wall, 1e3, "ms"))
    print(summary("floor CPU (not a schema)", cpu_f, 1e-6, "ms"))
    print(summary("floor wall (not a schema)", wall_f, 1e3, "ms"))
    print(summary("peer: knowable check, CPU", cpu_c, 1e3, "ms"))
    print(summary("peer: knowable check, wall", wall_c, 1e3, "ms"))
    print("  target: under 20 ms; server memory at the end: VmRSS %d KiB, VmHWM %d KiB; load average %.2f"
          % (mem["VmRSS"], mem["VmHWM"], os.getloadavg()[0]))


if __name__ == "__main__":
    main()
