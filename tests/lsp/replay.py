#!/usr/bin/python3
"""Replays a recorded LSP message sequence against `knowable lsp` and checks
every answer (protocol-level test of SPEC §5.2 and §9).

usage: replay.py KNOWABLE SEQUENCE.seq

A sequence has one step a line ('#' starts a comment):
  send JSON          a message, framed with its Content-Length
  raw TEXT           bytes as they are (\\r \\n \\\\ and \\xHH escapes): broken framing
  expect JSON        the next message from the server must match JSON: every key
                     given must be there with a matching value; "<any>" matches
                     anything; an array whose first item is "<contains>" matches
                     when each further item matches some item of the answer;
                     other arrays match item by item, same length
  expect-absent JSON the next message must match JSON and must not hold the keys
                     given as "<absent>"
  fill N             N bytes of filler (spaces): a body too large to keep
  close              closes the server's standard input
  exit N             the server must end with status N, having sent nothing more
  write NAME JSON    writes the JSON string's text to NAME in a scratch folder of
                     this replay (files the server reads from disk: rulebooks)
  remove NAME        removes NAME from the scratch folder
In JSON, ${ROOT} is this folder, ${URI} its file: URI and ${TEXT:PATH} the
text of PATH (under this folder) as the inside of a JSON string; ${SCRATCH}
and ${SCRATCH_URI} are the scratch folder and its URI; ${REPEAT:N:TEXT:REPEAT}
is TEXT written N times (large texts and long lists in one line).
"""
import json
import os
import queue
import shutil
import subprocess
import sys
import tempfile
import threading

ROOT = os.path.dirname(os.path.abspath(__file__))
SCRATCH = None


def substitute(s):
    out = s.replace("${ROOT}", ROOT).replace("${URI}", "file://" + ROOT)
    if SCRATCH:
        out = out.replace("${SCRATCH_URI}", "file://" + SCRATCH).replace("${SCRATCH}", SCRATCH)
    while "${REPEAT:" in out:
        a = out.index("${REPEAT:")
        b = out.index(":REPEAT}", a)
        count, _, text = out[a + 9:b].partition(":")
        out = out[:a] + text * int(count) + out[b + 8:]
    while "${TEXT:" in out:
        a = out.index("${TEXT:")
        b = out.index("}", a)
        with open(os.path.join(ROOT, out[a + 7:b]), encoding="utf-8") as f:
            text = json.dumps(f.read())[1:-1]
        out = out[:a] + text + out[b + 1:]
    return out


def unescape(s):
    return s.encode("latin-1").decode("unicode_escape").encode("latin-1")


def frame(body):
    data = body.encode("utf-8")
    return b"Content-Length: %d\r\n\r\n" % len(data) + data


class Server:
    def __init__(self, knowable):
        self.p = subprocess.Popen([knowable, "lsp"], stdin=subprocess.PIPE, stdout=subprocess.PIPE,
                                  stderr=subprocess.PIPE, cwd=ROOT)
        self.q = queue.Queue()
        threading.Thread(target=self.reader, daemon=True).start()

    def reader(self):
        f = self.p.stdout
        while True:
            length = None
            while True:
                line = f.readline()
                if not line:
                    self.q.put(None)
                    return
                line = line.strip()
                if not line:
                    break
                k, _, v = line.partition(b":")
                if k.lower() == b"content-length":
                    length = int(v)
            body = f.read(length)
            self.q.put(json.loads(body))

    def send(self, data):
        try:
            self.p.stdin.write(data)
            self.p.stdin.flush()
        except BrokenPipeError:
            pass

    def next(self, timeout=20):
        return self.q.get(timeout=timeout)


def match(want, got, path="$"):
    if want == "<any>":
        return None
    if isinstance(want, dict):
        if not isinstance(got, dict):
            return f"{path}: expected an object, got {json.dumps(got)[:200]}"
        for k, v in want.items():
            if v == "<absent>":
                if k in got:
                    return f"{path}.{k}: should be absent"
                continue
            if k not in got:
                return f"{path}.{k}: missing in {json.dumps(got)[:300]}"
            err = match(v, got[k], f"{path}.{k}")
            if err:
                return err
        return None
    if isinstance(want, list):
        if not isinstance(got, list):
            return f"{path}: expected an array, got {json.dumps(got)[:200]}"
        if want and want[0] == "<contains>":
            for i, w in enumerate(want[1:]):
                if all(match(w, g) for g in got):
                    return f"{path}: no item matches {json.dumps(w)} in {json.dumps(got)[:600]}"
            return None
        if len(want) != len(got):
            return f"{path}: {len(got)} items, expected {len(want)}: {json.dumps(got)[:600]}"
        for i, (w, g) in enumerate(zip(want, got)):
            err = match(w, g, f"{path}[{i}]")
            if err:
                return err
        return None
    if want != got:
        return f"{path}: {json.dumps(got)[:200]} != {json.dumps(want)}"
    return None


def main():
    global SCRATCH
    knowable, seq = os.path.abspath(sys.argv[1]), sys.argv[2]
    SCRATCH = os.path.realpath(tempfile.mkdtemp(prefix="knowable-lsp-"))
    try:
        return replay(knowable, seq)
    finally:
        shutil.rmtree(SCRATCH, ignore_errors=True)


def replay(knowable, seq):
    srv = Server(knowable)
    n = 0
    try:
        with open(seq, encoding="utf-8") as f:
            for lineno, line in enumerate(f, 1):
                line = line.rstrip("\n")
                if not line.strip() or line.lstrip().startswith("#"):
                    continue
                cmd, _, arg = line.partition(" ")
                where = f"{seq}:{lineno}"
                if cmd == "send":
                    srv.send(frame(substitute(arg)))
                elif cmd == "raw":
                    srv.send(unescape(arg))
                elif cmd == "fill":
                    left = int(arg)
                    while left > 0:
                        srv.send(b" " * min(left, 1 << 20))
                        left -= 1 << 20
                elif cmd in ("expect", "expect-absent"):
                    want = json.loads(substitute(arg))
                    try:
                        got = srv.next()
                    except queue.Empty:
                        print(f"{where}: no answer within 20 s")
                        return 1
                    if got is None:
                        print(f"{where}: the server closed its output; expected {arg[:200]}")
                        return 1
                    err = match(want, got)
                    if err:
                        print(f"{where}: {err}")
                        return 1
                    n += 1
                elif cmd == "close":
                    srv.p.stdin.close()
                elif cmd == "exit":
                    try:
                        rc = srv.p.wait(timeout=20)
                    except subprocess.TimeoutExpired:
                        print(f"{where}: the server did not end")
                        return 1
                    rest = srv.next(timeout=5)
                    if rest is not None:
                        print(f"{where}: an unexpected message: {json.dumps(rest)[:300]}")
                        return 1
                    if rc != int(arg):
                        print(f"{where}: exit status {rc}, expected {arg}; stderr: {srv.p.stderr.read()[:500]!r}")
                        return 1
                    n += 1
                elif cmd == "write":
                    name, _, text = arg.partition(" ")
                    with open(os.path.join(SCRATCH, name), "w", encoding="utf-8") as out:
                        out.write(json.loads(substitute(text)))
                elif cmd == "remove":
                    os.remove(os.path.join(SCRATCH, arg))
                else:
                    print(f"{where}: unknown step {cmd}")
                    return 1
    finally:
        if srv.p.poll() is None:
            srv.p.kill()
            srv.p.wait()
    print(f"{os.path.basename(seq)}: {n} checks passed")
    return 0


if __name__ == "__main__":
    sys.exit(main())
