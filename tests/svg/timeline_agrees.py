#!/usr/bin/python3
"""The reviewer documents say what the check says.

usage: timeline_agrees.py KNOWABLE PATH...   (a PATH is a schema, or a folder
whose */*.knowable.yaml and *.knowable.yaml are all taken)

For every schema that `knowable timeline` can place (a schema whose errors
stop the timeline is counted as skipped), the picture (`--svg`) and the text
report are compared with `knowable check --format json --show-waived`, run
with the same rulebook and root (from the golden case's .args; --data is left
out, since the documents take no data):
  - every feature the check calls late in every case (after-moment, or
    inherits-late-input, window-overruns, as-of-after-moment not limited to
    "some cases") is drawn in the group columns-late, and every feature it
    calls late only in some cases (maybe-after-moment, or one of those rules
    capped below the rulebook's severity or worded "may"/"possibly") in
    columns-maybe-late; nothing else is drawn in those two groups;
  - a column that is not a feature (role other than feature, or the
    prediction's target) is drawn in columns-not-feature, columns-no-timing
    or columns-not-placed, never among the features;
  - a column that declares none of known, window, derived_from and is not
    late is drawn in columns-no-timing (or columns-not-placed);
  - the rules drawn on each row (one <g class="finding"> per finding, its
    <title> starting with the rule id) are exactly the findings of the check
    whose subject is that column (rules of the families that name columns),
    waived ones marked waived with a reason in the hover text;
  - the text report puts every column under the heading of the same group
    and names the same rules on its line.
With --sources, `knowable sources --format json` is compared as well: each
source lists exactly the check's findings against it (external-without-
provenance and unused-source by subject; join-latest-value, no-point-in-
time-history and reads-unsettled-values through the column's join.source,
else its source).
Roles and declarations are read with PyYAML (an independent YAML reader);
exits 77 (skipped) when PyYAML is missing.
"""
import glob
import json
import os
import re
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET

try:
    import yaml
except ImportError:
    print("PyYAML missing: skipped")
    sys.exit(77)

Q = "{http://www.w3.org/2000/svg}"
LATE_RULES = {"after-moment", "maybe-after-moment", "inherits-late-input", "window-overruns",
              "as-of-after-moment"}
SOURCE_RULES = {"external-without-provenance", "unused-source"}
COLUMN_SOURCE_RULES = {"join-latest-value", "no-point-in-time-history", "reads-unsettled-values"}
NOT_ABOUT_COLUMNS = SOURCE_RULES | {"timeline-contradiction"}
# Headings of the text report -> the picture's group.
TEXT_GROUP = [
    ("Features late in every case", "columns-late"),
    ("Features late in some cases", "columns-maybe-late"),
    ("Features built from the target", "columns-from-target"),
    ("Features not ordered", "columns-unordered"),
    ("Features the timeline places after the moment", "columns-rule-off"),
    ("Features available at the moment", "columns-available"),
    ("Not features", "columns-not-feature"),
    ("Columns with no timing", "columns-no-timing"),
    ("Columns not placed", "columns-not-placed"),
]
NON_FEATURE_GROUPS = {"columns-not-feature", "columns-no-timing", "columns-not-placed"}

failures = []
counts = {"schemas": 0, "skipped": 0, "columns": 0, "late": 0, "maybe": 0, "findings": 0, "sources": 0}


def check(cond, what):
    if not cond:
        failures.append(what)
        print("FAIL:", what)


def shown(name):
    return re.sub(r"[\t\r\n]", " ", name)


def run(exe, args, cwd):
    env = dict(os.environ, KNOWABLE_TODAY="2026-06-01", NO_COLOR="1")
    r = subprocess.run([exe] + args, cwd=cwd, env=env, capture_output=True)
    err = r.stderr.decode("utf-8", "replace")
    check("Sanitizer" not in err and "runtime error" not in err and r.returncode < 3,
          "%s: knowable %s: exit %d, %s" % (cwd, " ".join(args), r.returncode, err[-800:]))
    return r


def case_args(path):
    """--rulebook and --root of the golden case's .args (the rest is check's own)."""
    base = path[: -len(".knowable.yaml")] if path.endswith(".knowable.yaml") else None
    if not base or not os.path.exists(base + ".args"):
        return []
    with open(base + ".args", encoding="utf-8") as f:
        words = f.read().split()
    out = []
    for i, w in enumerate(words):
        if w in ("--rulebook", "--root") and i + 1 < len(words):
            out += [w, words[i + 1]]
    return out


def rule_table(exe, args, cwd, schema):
    """rule id -> (family, effective severity) from `knowable rules`."""
    r = run(exe, ["rules"] + args + [schema], cwd)
    table, family = {}, None
    for line in r.stdout.decode("utf-8", "replace").splitlines():
        if line and not line.startswith(" ") and not line.startswith("rulebook:"):
            family = line.strip()
        m = re.match(r"  (\S+)\s+(error|warning|note|off)\s", line)
        if m:
            table[m.group(1)] = (family, m.group(2))
    return table


SEV = {"off": 0, "note": 1, "warning": 2, "error": 3}


def some_cases(d, rules):
    if d["rule"] == "maybe-after-moment":
        return True
    if d["rule"] not in LATE_RULES or d["rule"] == "after-moment":
        return False
    effective = rules.get(d["rule"], (None, "error"))[1]
    words = re.sub(r"'[^']*'", "", d["message"])
    return SEV[d["severity"]] < SEV[effective] or " may " in words or "possibly" in words


def about_columns(rule, rules):
    family = rules.get(rule, ("", ""))[0]
    return family not in ("schema", "preparation") and rule not in NOT_ABOUT_COLUMNS


def svg_rows(svg_bytes, names):
    """column name -> (group, [(rule, waived, title)])."""
    root = ET.fromstring(svg_bytes)
    by_title = sorted(names, key=lambda n: -len(n))
    rows = {}
    for g in root.iter(Q + "g"):
        cls = g.get("class") or ""
        if not cls.startswith("columns-"):
            continue
        for row in g.findall(Q + "g"):
            if row.get("class") != "column":
                continue
            title = row.find(Q + "title").text or ""
            name = next((n for n in by_title if title.startswith("column %s: " % shown(n))), None)
            found = []
            for fg in row.findall(Q + "g"):
                if fg.get("class") != "finding":
                    continue
                ft = fg.find(Q + "title").text or ""
                rule_text = [t for t in fg.findall(Q + "text") if t.get("class") == "rule"]
                found.append((ft.split(" ", 1)[0], ". Waived: " in ft, ft,
                              rule_text[0].text.split(" ", 1)[0] if rule_text else None))
            if name is not None:
                rows[name] = (cls, found)
    return rows


def text_rows(report, names):
    """column name -> group from the text report's headings (plain names only)."""
    out, group = {}, None
    plain = sorted((n for n in names if re.fullmatch(r"[A-Za-z0-9_.-]+", n)), key=lambda n: -len(n))
    in_columns = False
    for line in report.splitlines():
        if line.startswith("Columns, available"):
            in_columns = True
            continue
        if not in_columns:
            continue
        head = next((grp for words, grp in TEXT_GROUP if line.startswith(words)), None)
        if head:
            group = head
            continue
        name = next((n for n in plain if line.startswith("  " + n + " ")), None)
        if name and group:
            out[name] = (group, line)
    return out


def declares_timing(spec):
    return any(k in spec for k in ("known", "window", "derived_from"))


def check_schema(exe, path, tmp, with_sources):
    cwd, base = os.path.dirname(path) or ".", os.path.basename(path)
    args = case_args(path)
    svg = os.path.join(tmp, "t.svg")
    if os.path.exists(svg):
        os.unlink(svg)
    t = run(exe, ["timeline", "--svg", svg] + args + ["--", base], cwd)
    if t.returncode != 0:
        # only a schema the check cannot read may be refused
        check(b"fix them before placing its timeline" in t.stderr,
              "%s: the timeline failed without saying the schema has errors" % path)
        counts["skipped"] += 1
        return
    try:
        with open(path, encoding="utf-8") as f:
            doc = yaml.safe_load(f)
        columns = dict(doc.get("columns") or {})
    except Exception:  # PyYAML refuses what libyaml accepted: nothing to compare roles with
        counts["skipped"] += 1
        return
    c = run(exe, ["check", "--format", "json", "--show-waived", "--fail-on", "never"] + args + ["--", base], cwd)
    report = json.loads(c.stdout.decode("utf-8"))
    rules = rule_table(exe, args, cwd, base)
    counts["schemas"] += 1
    target = (doc.get("prediction") or {}).get("target")
    # PyYAML keeps the last of two equal keys, knowable reports them: the
    # declarations are then not read the same way
    same_reading = not any(d["rule"] == "duplicate-key" for d in report["diagnostics"])
    with open(svg, "rb") as f:
        drawn = svg_rows(f.read(), list(columns))
    text = text_rows(t.stdout.decode("utf-8", "replace"), list(columns))
    for name, spec in columns.items():
        spec = spec if isinstance(spec, dict) else {}
        counts["columns"] += 1
        where = "%s: column %r" % (path, name)
        if name not in drawn:
            check(False, "%s has no row in the picture" % where)
            continue
        group, shown_findings = drawn[name]
        mine = [d for d in report["diagnostics"] if d["subject"] == name and about_columns(d["rule"], rules)]
        feature = spec.get("role", "feature") == "feature" and name != target
        late = [d for d in mine if d["rule"] in LATE_RULES]
        every = feature and any(not some_cases(d, rules) for d in late)
        some = feature and not every and bool(late)
        counts["late"] += every
        counts["maybe"] += some
        if every:
            check(group == "columns-late", "%s: check calls it late in every case, drawn in %s" % (where, group))
        elif some:
            check(group == "columns-maybe-late", "%s: check calls it late in some cases, drawn in %s" % (where, group))
        else:
            check(group not in ("columns-late", "columns-maybe-late"),
                  "%s: check does not call it late, drawn in %s" % (where, group))
        if not feature:
            check(group in NON_FEATURE_GROUPS, "%s: not a feature, drawn in %s" % (where, group))
        if same_reading and not declares_timing(spec) and not every and not some:
            check(group in ("columns-no-timing", "columns-not-placed"),
                  "%s: declares no timing, drawn in %s" % (where, group))
        want = sorted((d["rule"], d["waived"]) for d in mine)
        got = sorted((r, w) for r, w, _, _ in shown_findings)
        counts["findings"] += len(want)
        check(want == got, "%s: rules drawn %s, check says %s" % (where, got, want))
        for r, w, title, visible in shown_findings:
            check(visible == r, "%s: finding %s shows %r" % (where, r, visible))
            if w:
                check(title.split(". Waived: ", 1)[1].strip() != "", "%s: waived %s without its reason" % (where, r))
        if name in text:
            tgroup, line = text[name]
            check(tgroup == group, "%s: text report puts it in %s, the picture in %s" % (where, tgroup, group))
            for r, _ in want:
                check(r in line, "%s: text report line lacks rule %s" % (where, r))
        elif re.fullmatch(r"[A-Za-z0-9_.-]+", name):
            check(False, "%s: no line in the text report" % where)
    if with_sources:
        check_sources(exe, path, args, doc, columns, report)


def check_sources(exe, path, args, doc, columns, report):
    cwd, base = os.path.dirname(path) or ".", os.path.basename(path)
    s = run(exe, ["sources", "--format", "json"] + args + ["--", base], cwd)
    check(s.returncode == 0, "%s: knowable sources failed" % path)
    if s.returncode != 0:
        return
    register = json.loads(s.stdout.decode("utf-8"))
    want = {}
    for d in report["diagnostics"]:
        if d["rule"] in SOURCE_RULES:
            want.setdefault(d["subject"], []).append((d["rule"], None, d["waived"]))
        elif d["rule"] in COLUMN_SOURCE_RULES:
            spec = columns.get(d["subject"]) or {}
            join = spec.get("join") or {}
            src = join.get("source") or spec.get("source")
            want.setdefault(src, []).append((d["rule"], d["subject"], d["waived"]))
    for src in register["sources"]:
        counts["sources"] += 1
        got = sorted((f["rule"], f["column"], f["waived"]) for f in src["findings"])
        exp = sorted(want.get(src["name"], []))
        check(got == exp, "%s: source %r lists %s, check says %s" % (path, src["name"], got, exp))
        for f in src["findings"]:
            if f["waived"]:
                check(bool(f["waiver_reason"]), "%s: source %r: waived %s without reason" % (path, src["name"], f["rule"]))


def schemas(paths):
    for p in paths:
        if os.path.isdir(p):
            found = sorted(glob.glob(os.path.join(p, "*.knowable.yaml")) +
                           glob.glob(os.path.join(p, "*", "*.knowable.yaml")))
            yield from found
        else:
            yield p


def main():
    exe = os.path.abspath(sys.argv[1])
    with_sources = "--sources" in sys.argv[2:]
    paths = [p for p in sys.argv[2:] if p != "--sources"]
    with tempfile.TemporaryDirectory() as tmp:
        for path in schemas(paths):
            check_schema(exe, path, tmp, with_sources)
    print("compared %(schemas)d schemas (%(skipped)d skipped: the timeline refuses them), %(columns)d columns, "
          "%(late)d late and %(maybe)d late in some cases by the check, %(findings)d findings on rows, "
          "%(sources)d sources" % counts)
    if counts["late"] == 0 or counts["maybe"] == 0:
        failures.append("no late column compared: the test would prove nothing")
    if failures:
        print("%d failures" % len(failures))
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
