#!/usr/bin/python3
"""sarif_ref.py KNOWABLE - checks knowable's SARIF against the OASIS schema.

Run from tests/ (meson's workdir).  Three checks:

1. Every golden SARIF report (a case under cases/ whose .args holds
   `--format sarif`) is valid against sarif-schema-2.1.0.json, the OASIS
   SARIF 2.1.0 schema with errata 01 (reference: OASIS, "Static Analysis
   Results Interchange Format Version 2.1.0 Plus Errata 01"; see
   sarif-schema-2.1.0.SOURCE), validated with python-jsonschema.
2. The SARIF of every golden case schema and of every example, produced now,
   is valid too, and says the same as the JSON report of the same run: same
   rules, positions, messages and fingerprints, in the same order.
3. Each result's region lies inside its file, counting columns in Unicode
   code points (SARIF 2.1.0 section 3.30.1, columnKind "unicodeCodePoints"),
   and each uri is a relative reference that a code host resolves against
   the checkout (SARIF 2.1.0 section 3.4.3, from memory of the text).

Exits 77 (skipped) when jsonschema is missing.
"""
import glob
import json
import os
import subprocess
import sys
import urllib.parse

try:
    import jsonschema
except ImportError:
    print("jsonschema is missing; skipped")
    sys.exit(77)

KNOWABLE = os.path.abspath(sys.argv[1])
HERE = os.getcwd()
failures = []


def fail(where, what):
    failures.append(f"{where}: {what}")


with open(os.path.join(HERE, "sarif-schema-2.1.0.json"), encoding="utf-8") as f:
    SARIF_SCHEMA = json.load(f)
# The OASIS schema declares draft-04.
VALIDATOR = jsonschema.Draft4Validator(SARIF_SCHEMA)


def validate(where, log):
    errors = sorted(VALIDATOR.iter_errors(log), key=lambda e: list(e.path))
    for e in errors[:5]:
        fail(where, f"not valid SARIF 2.1.0 at {'/'.join(map(str, e.path))}: {e.message}")
    if errors:
        return False
    runs = log["runs"]
    if len(runs) != 1:
        fail(where, f"{len(runs)} runs, expected one")
        return False
    run = runs[0]
    rules = run["tool"]["driver"].get("rules", [])
    ids = [r["id"] for r in rules]
    if len(set(ids)) != len(ids):
        fail(where, "a rule id appears twice in tool.driver.rules")
    if run.get("columnKind") != "unicodeCodePoints":
        fail(where, "columnKind is not unicodeCodePoints")
    for r in rules:
        for k in ("shortDescription", "fullDescription", "help"):
            if not r.get(k, {}).get("text"):
                fail(where, f"rule {r['id']} has no {k}")
        if r.get("defaultConfiguration", {}).get("level") not in ("error", "warning", "note"):
            fail(where, f"rule {r['id']} has no default level")
    for i, res in enumerate(run.get("results", [])):
        idx = res.get("ruleIndex")
        if idx is None or idx >= len(ids) or ids[idx] != res["ruleId"]:
            fail(where, f"result {i}: ruleIndex does not name ruleId {res['ruleId']}")
        if "knowable/v1" not in res.get("partialFingerprints", {}):
            fail(where, f"result {i}: no partial fingerprint")
        locs = res.get("locations", []) + res.get("relatedLocations", [])
        for loc in locs:
            phys = loc.get("physicalLocation")
            if phys:
                check_region(where, i, phys)
    return True


def check_region(where, i, phys):
    uri = phys["artifactLocation"]["uri"]
    parts = urllib.parse.urlsplit(uri)
    if parts.scheme or uri.startswith("/"):
        fail(where, f"result {i}: uri {uri!r} is not relative")
        return
    region = phys.get("region")
    if not region:
        return
    path = os.path.join(os.path.dirname(where), urllib.parse.unquote(uri))
    if not os.path.exists(path):
        fail(where, f"result {i}: uri {uri!r} names no file")
        return
    with open(path, encoding="utf-8", errors="replace") as f:
        lines = f.read().split("\n")
    line, col = region["startLine"], region.get("startColumn", 1)
    if line > len(lines):
        fail(where, f"result {i}: line {line} is past the end of {uri}")
    elif col > len(lines[line - 1]) + 1:
        fail(where, f"result {i}: column {col} is past the end of line {line} of {uri}")


def golden_reports():
    for args in sorted(glob.glob("cases/**/*.args", recursive=True)):
        with open(args, encoding="utf-8") as f:
            if "--format sarif" not in f.read():
                continue
        expected = args[: -len(".args")] + ".expected"
        with open(expected, encoding="utf-8") as f:
            text = f.read()
        body = text.rstrip("\n").rsplit("\n", 1)[0]  # drop the "exit N" line
        yield expected, body


def run(schema, fmt):
    folder, name = os.path.split(os.path.abspath(schema))
    p = subprocess.run([KNOWABLE, "check", "--format", fmt, name], cwd=folder, capture_output=True,
                       env={**os.environ, "KNOWABLE_TODAY": "2026-06-01", "NO_COLOR": "1"})
    return p.returncode, p.stdout.decode("utf-8")


n_golden = 0
for where, body in golden_reports():
    n_golden += 1
    try:
        log = json.loads(body)
    except ValueError as e:
        fail(where, f"not JSON: {e}")
        continue
    validate(os.path.join(HERE, where), log)

schemas = sorted(glob.glob("cases/**/*.knowable.yaml", recursive=True) +
                 glob.glob("../examples/**/*.knowable.yaml", recursive=True))
n_runs = 0
for schema in schemas:
    rc_s, out_s = run(schema, "sarif")
    rc_j, out_j = run(schema, "json")
    n_runs += 1
    where = os.path.abspath(schema)
    if rc_s != rc_j:
        fail(where, f"exit {rc_s} with SARIF but {rc_j} with JSON")
    try:
        log, report = json.loads(out_s), json.loads(out_j)
    except ValueError as e:
        fail(where, f"output is not JSON: {e}")
        continue
    if not validate(where, log):
        continue
    results = log["runs"][0].get("results", [])
    diags = report["diagnostics"]
    if len(results) != len(diags):
        fail(where, f"{len(results)} SARIF results but {len(diags)} JSON diagnostics")
        continue
    for r, d in zip(results, diags):
        loc = r.get("locations", [{}])[0].get("physicalLocation", {})
        region = loc.get("region", {})
        got = (r["ruleId"], r["level"], r["message"]["text"], region.get("startLine", 0),
               region.get("startColumn", 0), r["partialFingerprints"]["knowable/v1"], len(r.get("relatedLocations", [])))
        want = (d["rule"], d["severity"], d["message"], d["line"], d["column"], d["fingerprint"], len(d["notes"]))
        if got != want:
            fail(where, f"SARIF result {got} differs from JSON diagnostic {want}")

for f in failures:
    print(f)
print(f"{n_golden} golden SARIF reports and {n_runs} schemas checked; {len(failures)} problems")
if n_golden == 0 or n_runs == 0:
    print("nothing was checked")
    sys.exit(1)
sys.exit(1 if failures else 0)
