#!/usr/bin/python3
"""same_as_check.py KNOWABLE - the language server publishes the findings of
`knowable check` (SPEC §5.2: "the same run"): for every golden case of
tests/cases/ run without extra arguments, one server opens the schema from
its file and the findings it publishes (rule, severity, file, line, column,
message, and every note's file, line, column and message) must equal those
of `knowable check --format json` on the same file, in the same order.
Positions are compared by line (the columns' units differ: characters in
the check, UTF-16 units in LSP; the recorded sequences check columns).
A case that is not valid UTF-8 cannot be sent over LSP and is left out."""
import glob
import json
import os
import subprocess
import sys

TESTS = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
SEVERITY = {1: "error", 2: "warning", 3: "note", 4: "note"}


def frame(obj):
    data = json.dumps(obj).encode()
    return b"Content-Length: %d\r\n\r\n" % len(data) + data


def read_all(data):
    out, i = [], 0
    while i < len(data):
        j = data.index(b"\r\n\r\n", i)
        n = int(data[i:j].split(b":")[1])
        out.append(json.loads(data[j + 4:j + 4 + n]))
        i = j + 4 + n
    return out


def uri_path(uri):
    from urllib.parse import unquote
    return os.path.realpath(unquote(uri[len("file://"):]))


def main():
    knowable = os.path.abspath(sys.argv[1])
    cases = sorted(glob.glob(os.path.join(TESTS, "cases", "*", "*.knowable.yaml")))
    checked = failed = 0
    for case in cases:
        if os.path.exists(case[:-len(".knowable.yaml")] + ".args"):
            continue  # options of its own (--data, --rulebook, ...): not what an editor sends
        r = subprocess.run([knowable, "check", "--format", "json", "--", case], capture_output=True, cwd=TESTS)
        try:
            want = json.loads(r.stdout)["diagnostics"]
        except (ValueError, KeyError):
            continue  # the check could not be done (exit 2 without a report)
        expected = [(d["rule"], d["severity"], os.path.realpath(os.path.join(TESTS, d["file"])), d["line"],
                     [(os.path.realpath(os.path.join(TESTS, n["file"])), n["line"], n["message"]) for n in d["notes"]],
                     d["message"]) for d in want]
        with open(case, "rb") as f:
            raw = f.read()
        try:
            text = raw.decode("utf-8")
        except UnicodeDecodeError:
            continue  # LSP carries text as Unicode: invalid UTF-8 cannot be sent
        uri = "file://" + os.path.realpath(case)
        msgs = frame({"jsonrpc": "2.0", "id": 1, "method": "initialize", "params": {"capabilities": {}}})
        msgs += frame({"jsonrpc": "2.0", "method": "textDocument/didOpen",
                       "params": {"textDocument": {"uri": uri, "languageId": "yaml", "version": 1, "text": text}}})
        msgs += frame({"jsonrpc": "2.0", "id": 2, "method": "shutdown"})
        msgs += frame({"jsonrpc": "2.0", "method": "exit"})
        p = subprocess.run([knowable, "lsp"], input=msgs, capture_output=True, cwd=TESTS, timeout=60)
        got = []
        for m in read_all(p.stdout):
            if m.get("method") != "textDocument/publishDiagnostics":
                continue
            path = uri_path(m["params"]["uri"])
            for d in m["params"]["diagnostics"]:
                notes = []
                for n in d.get("relatedInformation", []):
                    rng = n["location"]["range"]
                    whole_file = rng["start"] == rng["end"] == {"line": 0, "character": 0}
                    notes.append((uri_path(n["location"]["uri"]), 0 if whole_file else rng["start"]["line"] + 1,
                                  n["message"]))
                got.append((d["code"], SEVERITY[d["severity"]], path, d["range"]["start"]["line"] + 1, notes,
                            d["message"]))
        # The server sorts by file as it publishes (one message per file).
        key = lambda d: (d[2], d[3])
        if sorted(got, key=key) != sorted(expected, key=key) or p.returncode != 0:
            failed += 1
            print("DIFFERS:", os.path.relpath(case, TESTS), "exit", p.returncode)
            for e in expected:
                if e not in got:
                    print("  check only:", e[0], e[2], e[3], e[5][:100])
            for g in got:
                if g not in expected:
                    print("  lsp only:  ", g[0], g[2], g[3], g[5][:100])
        checked += 1
    print(f"{checked} cases compared, {failed} differ")
    return 1 if failed or checked < 50 else 0


if __name__ == "__main__":
    sys.exit(main())
