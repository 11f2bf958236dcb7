#!/usr/bin/python3
"""Independence of findings (SPEC §4): one unrelated schema error never
hides a finding.

For every schema of the suite that has findings (the demo and the golden
cases that fire), and for every kind of schema error of SPEC §4.1 (plus a
contradiction among events tied to nothing else), this test writes two
twins in a scratch copy of the schema's folder: the schema as it is, and
the schema with one added part that is broken in that way and that nothing
else refers to.  It runs `knowable check --format json` on both and checks
that every finding of the clean twin is still reported, unchanged, beside
the broken one, and that the broken twin reports the error it was given.

Both twins are written as JSON (a YAML subset), so the only difference
between them is the added part.  Findings are compared by rule, severity,
subject and message (line numbers move when a part is added).

Usage: pairs.py KNOWABLE SOURCE_ROOT.  Exit 0 pass, 1 fail, 77 skipped
(PyYAML missing).
"""
import copy
import datetime
import json
import os
import shutil
import subprocess
import sys
import tempfile

try:
    import yaml
except ImportError:
    print("skipped: PyYAML (python3-yaml) is not installed")
    sys.exit(77)


class Loader(yaml.SafeLoader):
    """YAML 1.1 as libyaml reads it, but dates stay text (the schema's
    `retrieved:` and waiver `expires:` are strings to knowable)."""


def _str_date(loader, node):
    return loader.construct_scalar(node)


Loader.add_constructor("tag:yaml.org,2002:timestamp", _str_date)


def load(path):
    with open(path, encoding="utf-8") as f:
        return yaml.load(f, Loader=Loader)


def default(o):
    if isinstance(o, (datetime.date, datetime.datetime)):
        return o.isoformat()
    raise TypeError(repr(o))


# Each kind: (expected rule, a function that adds one broken part that
# nothing else refers to).  Names start with zz_ so they clash with nothing.
def add_unknown_key(doc):
    doc["columns"]["zz_typo"] = {"type": "number", "knwon": doc["prediction"]["moment"]}


def add_wrong_type(doc):
    doc["columns"]["zz_wrong"] = {"role": ["feature"], "known": doc["prediction"]["moment"]}


def add_missing_required(doc):
    doc.setdefault("sources", {})
    if doc["sources"] is None:
        doc["sources"] = {}
    doc["sources"]["zz_kindless"] = {"description": "a source that forgot its kind"}


def add_unknown_reference(doc):
    doc["columns"]["zz_ghost"] = {"known": "zz_no_such_event"}


def add_bad_duration(doc):
    doc["events"]["zz_late_event"] = {"after": {doc["prediction"]["moment"]: "P3X"}}


def add_bad_lag(doc):
    doc["columns"]["zz_delayed"] = {"known": doc["prediction"]["moment"], "delay": ["PT2H", "PT1H"]}


def add_bad_pattern(doc):
    doc["columns"]["zz_code"] = {"role": "identifier", "format": "(unclosed"}


def add_derivation_cycle(doc):
    doc["columns"]["zz_a"] = {"derived_from": ["zz_b"]}
    doc["columns"]["zz_b"] = {"derived_from": ["zz_a"]}


def add_include_refused(doc):
    doc["include"] = list(doc.get("include") or []) + ["/etc/zz-absolute.yaml"]


def add_contradiction(doc):
    doc["events"]["zz_first"] = {"after": {"zz_second": "PT1H"}}
    doc["events"]["zz_second"] = {"after": {"zz_first": "PT1H"}}


KINDS = {
    "unknown-key": ("schema-shape", add_unknown_key),
    "wrong-type": ("schema-shape", add_wrong_type),
    "missing-required-key": ("schema-shape", add_missing_required),
    "unknown-reference": ("unknown-reference", add_unknown_reference),
    "bad-duration": ("bad-duration", add_bad_duration),
    "bad-lag": ("bad-duration", add_bad_lag),
    "bad-pattern": ("bad-pattern", add_bad_pattern),
    "derivation-cycle": ("derivation-cycle", add_derivation_cycle),
    "include-refused": ("include-refused", add_include_refused),
    "contradiction": ("timeline-contradiction", add_contradiction),
}
# duplicate-key is added as text: a JSON object cannot hold a key twice.
DUPLICATE = ("duplicate-key", '"zz_twice": {"type": "number", "type": "text"}')


def run(knowable, folder, name):
    p = subprocess.run([knowable, "check", "--format", "json", "--fail-on", "never", "--", name],
                       cwd=folder, capture_output=True, text=True,
                       env=dict(os.environ, KNOWABLE_TODAY="2026-06-01", NO_COLOR="1"))
    try:
        out = json.loads(p.stdout)
    except ValueError:
        return None, p.returncode, p.stderr
    return out["diagnostics"], p.returncode, p.stderr


def key(d):
    return (d["rule"], d["severity"], d["subject"], d["message"])


def suite(root):
    """The schemas with findings: the demo and every firing golden case
    that loads without a schema error of its own."""
    yield os.path.join(root, "examples", "parcel-delays.knowable.yaml")
    cases = os.path.join(root, "tests", "cases")
    for rule in sorted(os.listdir(cases)):
        folder = os.path.join(cases, rule)
        if not os.path.isdir(folder):
            continue
        for f in sorted(os.listdir(folder)):
            if f.startswith("fires-") and f.endswith(".knowable.yaml") \
                    and not os.path.exists(os.path.join(folder, f[:-len(".knowable.yaml")] + ".args")):
                yield os.path.join(folder, f)


def main():
    knowable, root = os.path.abspath(sys.argv[1]), sys.argv[2]
    failures, pairs, schemas = 0, 0, 0
    for path in suite(root):
        try:
            doc = load(path)
        except (yaml.YAMLError, UnicodeDecodeError):
            continue  # a case about bytes libyaml refuses
        if not isinstance(doc, dict) or not isinstance(doc.get("columns"), dict) \
                or not isinstance(doc.get("events"), dict) or not isinstance(doc.get("prediction"), dict) \
                or "moment" not in doc["prediction"]:
            continue
        with tempfile.TemporaryDirectory(prefix="kn-pairs.") as tmp:
            work = os.path.join(tmp, "w")
            shutil.copytree(os.path.dirname(path), work, symlinks=True)
            os.mkdir(os.path.join(work, ".git"))  # the copy is its own repository (include root)
            clean_text = json.dumps(doc, default=default, indent=1)
            with open(os.path.join(work, "zz-clean.json.yaml"), "w", encoding="utf-8") as f:
                f.write(clean_text)
            clean, rc, err = run(knowable, work, "zz-clean.json.yaml")
            if clean is None or rc == 2:
                continue  # a case about an unreadable schema, not a twin
            shown = [d for d in clean if d["rule"] not in ("unused-source",)]
            if not shown or any(d["rule"] in {r for r, _ in KINDS.values()} | {"duplicate-key"}
                                for d in shown):
                continue  # no findings, or a schema error of its own
            schemas += 1
            twins = {}
            for name, (rule, add) in KINDS.items():
                broken = copy.deepcopy(doc)
                add(broken)
                twins[name] = (rule, json.dumps(broken, default=default, indent=1))
            dup_rule, dup_text = DUPLICATE
            i = clean_text.index('"columns": {') + len('"columns": {')
            twins["duplicate-key"] = (dup_rule, clean_text[:i] + "\n  " + dup_text + "," + clean_text[i:])
            for name, (rule, text) in twins.items():
                pairs += 1
                with open(os.path.join(work, "zz-broken.json.yaml"), "w", encoding="utf-8") as f:
                    f.write(text)
                got, rc, err = run(knowable, work, "zz-broken.json.yaml")
                label = f"{os.path.relpath(path, root)} + {name}"
                if got is None:
                    print(f"FAIL {label}: no JSON report (exit {rc}): {err[:300]}")
                    failures += 1
                    continue
                if rule not in {d["rule"] for d in got}:
                    print(f"FAIL {label}: the broken twin does not report {rule}")
                    failures += 1
                have = {key(d) for d in got}
                lost = [key(d) for d in shown if key(d) not in have]
                if lost:
                    print(f"FAIL {label}: {len(lost)} of {len(shown)} findings of the clean twin lost, e.g. {lost[0]}")
                    failures += 1
    print(f"{schemas} schemas x {len(KINDS) + 1} kinds of error: {pairs} pairs, {failures} failed")
    if schemas < 10:
        print("FAIL: fewer than 10 schemas with findings were found; the suite is not testing much")
        return 1
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
