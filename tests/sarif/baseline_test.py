#!/usr/bin/python3
"""baseline_test.py KNOWABLE - fingerprints, baselines and output files, end to end.

Runs `knowable check` on copies of tests/sarif/fixtures/ in a temporary
folder, the way a team adopting knowable on a legacy schema would:

- fingerprints survive lines inserted above the findings and the columns
  being reordered (SPEC section 7);
- --write-baseline records every finding; --baseline then hides them, they
  do not count toward the exit status, and the summary says how many matched;
- a leak added after the baseline was written is still reported, and fails;
- a baseline may be refreshed in place; -o and --write-baseline never write
  over an input; -o leaves no temporary file behind;
- broken or hostile baseline files stop the check with exit status 2 and a
  message, never a crash.

Only the Python standard library is needed.
"""
import json
import os
import re
import shutil
import subprocess
import sys
import tempfile

KNOWABLE = os.path.abspath(sys.argv[1])
FIXTURES = os.path.join(os.path.dirname(os.path.abspath(__file__)), "fixtures")
failures = []
checks = 0


def check(cond, what):
    global checks
    checks += 1
    if not cond:
        failures.append(what)
    return cond


def knowable(tmp, *args):
    p = subprocess.run([KNOWABLE, "check", *args], cwd=tmp, capture_output=True,
                       env={**os.environ, "KNOWABLE_TODAY": "2026-06-01", "NO_COLOR": "1"})
    return p.returncode, p.stdout.decode("utf-8", "replace"), p.stderr.decode("utf-8", "replace")


def report(tmp, *args):
    rc, out, err = knowable(tmp, "--format", "json", *args)
    try:
        return rc, json.loads(out), err
    except ValueError:
        failures.append(f"check {' '.join(args)} gave no JSON (exit {rc}): {err.strip()}")
        return rc, {"diagnostics": [], "summary": {}}, err


def fingerprints(rep):
    return sorted(d["fingerprint"] for d in rep["diagnostics"])


def reorder_columns(text):
    """Reverses the order of the column entries under `columns:`."""
    lines = text.split("\n")
    start = lines.index("columns:") + 1
    end = start
    while end < len(lines) and (lines[end] == "" or lines[end].startswith(" ")):
        end += 1
    blocks = []
    for line in lines[start:end]:
        if re.match(r"^  [^ #]", line):
            blocks.append([line])
        elif blocks:
            blocks[-1].append(line)
    body = []
    for b in reversed(blocks):
        while b and b[-1] == "":
            b.pop()
        body.extend(b)
    return "\n".join(lines[:start] + body + [""] + lines[end:])


def insert_lines(text):
    """Adds comment and blank lines at the top and inside the columns."""
    head = "# Reviewed by the parcel-data guild.\n#\n# (two more lines)\n\n"
    text = text.replace("columns:\n", "columns:\n  # identifiers first\n\n", 1)
    return head + text


NEW_LEAK = """  scans_until_delivery:
    description: number of scans between dispatch and delivery
    type: number
    known: delivered
    source: scan_events
"""


def add_leak(text):
    return text.replace("columns:\n", "columns:\n" + NEW_LEAK, 1)


def write(tmp, name, text):
    with open(os.path.join(tmp, name), "w", encoding="utf-8") as f:
        f.write(text)


def read(tmp, name):
    with open(os.path.join(tmp, name), encoding="utf-8") as f:
        return f.read()


def main():
    with tempfile.TemporaryDirectory() as tmp:
        shutil.copytree(FIXTURES, tmp, dirs_exist_ok=True)
        legacy = read(tmp, "legacy.knowable.yaml")
        edited = reorder_columns(insert_lines(legacy))
        check(edited != legacy and sorted(edited.split("\n")) != sorted(legacy.split("\n")),
              "the edits changed nothing")
        # The edited copy must be checked under the legacy name: the file is
        # part of the fingerprint, and a team edits the same file.
        os.mkdir(os.path.join(tmp, "later"))
        shutil.copytree(os.path.join(tmp, "shared"), os.path.join(tmp, "later", "shared"))
        write(os.path.join(tmp, "later"), "legacy.knowable.yaml", edited)

        rc, before, _ = report(tmp, "legacy.knowable.yaml")
        n = len(before["diagnostics"])
        check(rc == 1 and n >= 3, f"the legacy schema should fail with several findings (exit {rc}, {n} found)")

        # 1. Fingerprints survive inserted lines and reordered columns.
        later = os.path.join(tmp, "later")
        rc, after, _ = report(later, "legacy.knowable.yaml")
        check(fingerprints(after) == fingerprints(before),
              "fingerprints changed when lines were inserted and columns reordered:\n  "
              f"{fingerprints(before)}\n  {fingerprints(after)}")
        moved = {d["fingerprint"]: d["line"] for d in after["diagnostics"]}
        check(any(moved.get(d["fingerprint"]) != d["line"] for d in before["diagnostics"]),
              "no finding moved to another line, so the test proves nothing")
        rc, sarif_out, _ = knowable(later, "--format", "sarif", "legacy.knowable.yaml")
        sarif = json.loads(sarif_out)
        check(sorted(r["partialFingerprints"]["knowable/v1"] for r in sarif["runs"][0]["results"])
              == fingerprints(before), "SARIF partialFingerprints differ from the JSON fingerprints")

        # 2. --write-baseline records every finding; --baseline hides them.
        rc, out, err = knowable(tmp, "--write-baseline", "baseline.json", "legacy.knowable.yaml")
        # SPEC §7: writing the baseline is the job, so it exits 0 when written
        # (an adoption script under `set -e` goes on), and still reports.
        check(rc == 0, f"--write-baseline exits 0 once the baseline is written (exit {rc})")
        check(f"recorded {n} findings" in err, f"--write-baseline should say what it recorded: {err!r}")
        base = json.loads(read(tmp, "baseline.json"))
        check(base.get("knowable_baseline") == 2, "the baseline has no version")
        found = base.get("findings", [])
        check(sorted(f["fingerprint"] for f in found) == fingerprints(before),
              "the baseline does not record the findings' fingerprints")
        check(all({"rule", "file", "subject", "message"} <= set(f) for f in found),
              "baseline entries lack rule, file, subject or message for people to read")
        shutil.copy(os.path.join(tmp, "baseline.json"), os.path.join(later, "baseline.json"))

        rc, rep, _ = report(tmp, "--baseline", "baseline.json", "legacy.knowable.yaml")
        check(rc == 0 and rep["diagnostics"] == [] and rep["summary"].get("baselined") == n,
              f"with its baseline the legacy schema should pass quietly (exit {rc}, summary {rep['summary']})")
        rc, out, _ = knowable(tmp, "--baseline", "baseline.json", "--fail-on", "note", "legacy.knowable.yaml")
        check(rc == 0 and f"({n} matched the baseline)" in out and "error:" not in out,
              f"text with a baseline: exit {rc}, output {out!r}")
        rc, rep, _ = report(later, "--baseline", "baseline.json", "legacy.knowable.yaml")
        check(rc == 0 and rep["diagnostics"] == [],
              f"after harmless edits the baseline should still match everything (exit {rc}, "
              f"{[d['message'] for d in rep['diagnostics']]})")

        # 3. A leak added after the baseline is still reported and fails.
        write(later, "legacy.knowable.yaml", add_leak(edited))
        rc, rep, _ = report(later, "--baseline", "baseline.json", "legacy.knowable.yaml")
        new = rep["diagnostics"]
        check(rc == 1 and len(new) == 1 and new[0]["subject"] == "scans_until_delivery"
              and new[0]["rule"] == "after-moment",
              f"the new leak should be the one finding reported (exit {rc}, "
              f"{[(d['rule'], d['subject']) for d in new]})")
        check(rep["summary"].get("baselined") == n, f"the old findings should still match: {rep['summary']}")
        rc, sarif_out, _ = knowable(later, "--format", "sarif", "--baseline", "baseline.json",
                                    "legacy.knowable.yaml")
        results = json.loads(sarif_out)["runs"][0]["results"]
        check(rc == 1 and len(results) == 1 and results[0]["ruleId"] == "after-moment",
              f"SARIF with a baseline should hold only the new leak ({len(results)} results)")

        # 4. A baseline may be refreshed in place; it then covers the new leak.
        rc, _, err = knowable(later, "--baseline", "baseline.json", "--write-baseline", "baseline.json",
                              "legacy.knowable.yaml")
        check(rc == 0, f"refreshing the baseline writes it and exits 0 (exit {rc}) {err}")
        rc, rep, _ = report(later, "--baseline", "baseline.json", "legacy.knowable.yaml")
        check(rc == 0 and rep["summary"].get("baselined") == n + 1, f"refreshed baseline: exit {rc}")

        # 5. Output files never replace an input, and leave no temporary file.
        for fmt in ("text", "json", "sarif"):
            rc, _, err = knowable(tmp, "--format", fmt, "-o", "legacy.knowable.yaml", "legacy.knowable.yaml")
            check(rc == 2 and "one of the inputs" in err and read(tmp, "legacy.knowable.yaml") == legacy,
                  f"-o over the schema with --format {fmt}: exit {rc}, {err!r}")
        rc, _, err = knowable(tmp, "-o", "./legacy.knowable.yaml", "legacy.knowable.yaml")
        check(rc == 2 and read(tmp, "legacy.knowable.yaml") == legacy, "-o over the schema by another path")
        rc, _, err = knowable(tmp, "-o", "baseline.json", "--baseline", "baseline.json", "legacy.knowable.yaml")
        check(rc == 2 and json.loads(read(tmp, "baseline.json"))["knowable_baseline"] == 2,
              "-o over the --baseline file must be refused")
        rc, _, err = knowable(tmp, "--write-baseline", "legacy.knowable.yaml", "legacy.knowable.yaml")
        check(rc == 2 and read(tmp, "legacy.knowable.yaml") == legacy,
              f"--write-baseline over the schema must be refused (exit {rc}, {err!r})")
        rc, _, err = knowable(tmp, "--format", "sarif", "-o", "report.sarif", "legacy.knowable.yaml")
        check(rc == 1 and json.loads(read(tmp, "report.sarif"))["version"] == "2.1.0",
              f"-o report.sarif should hold the report (exit {rc}, {err!r})")
        leftovers = [f for f in os.listdir(tmp) if ".tmp-" in f]
        check(not leftovers, f"temporary files left behind: {leftovers}")

        # 6. Broken and hostile baselines: exit 2 with a message.
        hostile = {
            "missing": None,
            "empty": "",
            "not-json": "fingerprints: all",
            "array": "[]",
            "no-version": '{"findings": []}',
            "version-1": '{"knowable_baseline": 1, "findings": []}',
            "version-3": '{"knowable_baseline": 3, "findings": []}',
            "findings-object": '{"knowable_baseline": 1, "findings": {}}',
            "short-fingerprint": '{"knowable_baseline": 1, "findings": [{"fingerprint": "abc"}]}',
            "no-fingerprint": '{"knowable_baseline": 1, "findings": [{"rule": "after-moment"}]}',
            "trailing": '{"knowable_baseline": 1, "findings": []} {}',
            "unterminated": '{"knowable_baseline": 1, "findings": ["',
            "control-char": '{"knowable_baseline": 1, "x": "a\x01b", "findings": []}',
            "deep": "[" * 200000,
            "deep-object": '{"knowable_baseline": 1, "findings": [], "x": ' + '{"a": ' * 100000,
            "long-string": '{"knowable_baseline": 1, "findings": [], "x": "' + "a" * 3000000,
        }
        for name, text in hostile.items():
            path = f"hostile-{name}.json"
            if text is not None:
                write(tmp, path, text)
            rc, out, err = knowable(tmp, "--baseline", path, "legacy.knowable.yaml")
            check(rc == 2 and "knowable: baseline" in err and out == "",
                  f"hostile baseline {name}: exit {rc}, stderr {err[:200]!r}")
        write(tmp, "fine.json", '\ufeff{"findings": [], "x": [1, -2.5e3, true, null, "\\u00e9\\n"],'
                                ' "knowable_baseline": 2}')
        rc, _, err = knowable(tmp, "--baseline", "fine.json", "legacy.knowable.yaml")
        check(rc == 1, f"a baseline with extra keys and no findings is fine (exit {rc}, {err!r})")

    for f in failures:
        print("FAIL:", f)
    print(f"{checks} checks, {len(failures)} failed")
    return 1 if failures else 0


sys.exit(main())
