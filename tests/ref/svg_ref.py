#!/usr/bin/python3
"""Structure of `knowable timeline SCHEMA --svg FILE` (SPEC section 5).

usage: svg_ref.py KNOWABLE SCHEMA...   (run from the tests/ folder or give paths)

For each schema the picture is drawn twice and checked:
  - well-formed XML 1.0 (reference: Python's xml.etree.ElementTree, which
    parses with expat and refuses any character XML 1.0 does not allow);
  - an <svg> root in the SVG namespace with version="1.1" (reference: the
    W3C SVG 1.1 recommendation, section 5.1.2: the namespace
    http://www.w3.org/2000/svg and the version attribute);
  - self-contained and printable: no <script>, no <foreignObject>, no
    on* event attributes, no reference outside the file (every url() and
    href points at an id in the file), a white background first;
  - every event and every column of the schema has a row whose tooltip
    (<title>) holds its full name exactly, and a visible label that is the
    full name, on one <text class="name"> line or wrapped over several, so
    that long names that differ only at their ends stay apart (names read
    with PyYAML, so escaping is checked against an independent YAML reader);
  - a wrapped text is not broken inside a duration ("+2h" / "15min");
  - the moment line is present, vertical, spans every row, and stands at
    the x of the "0" tick label;
  - a contradictory timeline is stated, its set-aside events drawn without
    a bar, the rest placed as usual;
  - the columns are grouped by the verdict the text report gives (the
    agreement of both with `knowable check` is timeline_agrees.py's job);
  - deterministic: both drawings are byte-identical.
Exits 77 (skipped) when PyYAML is missing.
"""
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

SVG_NS = "http://www.w3.org/2000/svg"
Q = "{%s}" % SVG_NS

# The text report's verdict words -> the picture's group (class of its <g>).
VERDICT_GROUP = [
    ("maybe after the moment", "columns-maybe-late"),
    ("after the moment by the timeline", "columns-rule-off"),
    ("after the moment", "columns-late"),
    ("built from the target", "columns-from-target"),
    ("unordered", "columns-unordered"),
    ("available", "columns-available"),
    ("not a feature", "columns-not-feature"),
    ("no timing declared", "columns-no-timing"),
    ("not placed", "columns-not-placed"),
]

failures = []


def check(cond, what):
    if not cond:
        failures.append(what)
        print("FAIL:", what)


def shown(name):
    """A name as the picture writes it: line breaks and tabs as spaces."""
    return re.sub(r"[\t\r\n]", " ", name)


def draw(exe, schema, out):
    r = subprocess.run([exe, "timeline", schema, "--svg", out], capture_output=True)
    return r


def check_schema(exe, schema, tmp):
    with open(schema, encoding="utf-8") as f:
        doc = yaml.safe_load(f)
    events = dict(doc.get("events") or {})
    for inc in doc.get("include") or []:
        with open(os.path.join(os.path.dirname(schema), inc), encoding="utf-8") as f:
            events.update((yaml.safe_load(f) or {}).get("events") or {})
    columns = list((doc.get("columns") or {}).keys())

    a, b = os.path.join(tmp, "a.svg"), os.path.join(tmp, "b.svg")
    r = draw(exe, schema, a)
    check(r.returncode == 0, "%s: knowable timeline --svg exit status %d (%s)"
          % (schema, r.returncode, r.stderr.decode(errors="replace")))
    if r.returncode != 0:
        return
    report = r.stdout.decode("utf-8", errors="replace")
    draw(exe, schema, b)
    with open(a, "rb") as f:
        first = f.read()
    with open(b, "rb") as f:
        second = f.read()
    check(first == second, "%s: two drawings differ" % schema)

    try:
        root = ET.fromstring(first)
    except ET.ParseError as e:
        check(False, "%s: not well-formed XML: %s" % (schema, e))
        return
    check(root.tag == Q + "svg", "%s: root is %s, not svg" % (schema, root.tag))
    check(root.get("version") == "1.1", "%s: version is not 1.1" % schema)
    check(first.startswith(b"<?xml version=\"1.0\" encoding=\"UTF-8\""), "%s: no XML declaration" % schema)
    if "contradict each other" in report:
        # The events on a contradiction are set aside, the rest is placed: the
        # picture says so, and draws the set-aside events without a bar.
        words = " ".join(t.text or "" for t in root.iter(Q + "text"))
        check("contradict each other" in words, "%s: contradiction not stated" % schema)
        aside = [g for g in root.iter(Q + "g") if g.get("class") == "event"
                 and "set aside" in (g.find(Q + "title").text or "")]
        check(aside and all(not g.findall(Q + "rect") for g in aside),
              "%s: set-aside events missing or drawn with a bar" % schema)

    ids = {el.get("id") for el in root.iter() if el.get("id")}
    for el in root.iter():
        tag = el.tag.replace(Q, "")
        check(tag not in ("script", "foreignObject", "image"), "%s: has <%s>" % (schema, tag))
        for k, v in el.attrib.items():
            check(not k.lower().startswith("on"), "%s: event attribute %s" % (schema, k))
            for ref in re.findall(r"url\(([^)]*)\)", v):
                check(ref.startswith("#") and ref[1:] in ids, "%s: reference %s" % (schema, ref))
            if k.endswith("href"):
                check(v.startswith("#") and v[1:] in ids, "%s: href %s" % (schema, v))
    first_rect = next(el for el in root.iter(Q + "rect"))
    check(first_rect.get("fill") == "#ffffff" and first_rect.get("width") == root.get("width"),
          "%s: no white background" % schema)

    # Rows: each <g class="event"> / <g class="column"> has a <title> and labels.
    rows = {}
    for g in root.iter(Q + "g"):
        if g.get("class") in ("event", "column"):
            title = g.find(Q + "title").text or ""
            texts = [t.text or "" for t in g.findall(Q + "text") if t.get("class") == "name"]
            rows.setdefault(g.get("class"), []).append((title, texts))

    def has_row(kind, name):
        want = "%s %s: " % (kind, shown(name))
        for title, texts in rows.get(kind, []):
            if title.startswith(want):
                # the name in full, on one line or wrapped over several
                if "".join(texts) == shown(name):
                    return True
                check(False, "%s: %s label %r does not match %r" % (schema, kind, texts, name))
                return True
        return False

    for e in events:
        check(has_row("event", e), "%s: no row for event %r" % (schema, e))
    for c in columns:
        check(has_row("column", c), "%s: no row for column %r" % (schema, c))

    # A wrapped text is not broken inside a duration ("+2h" / "15min"): two
    # lines one under the other (same x and size, one line apart) where the
    # first ends in a word that starts with a digit and the second starts
    # with a digit.
    texts = [t for t in root.iter(Q + "text")]
    for a, b in zip(texts, texts[1:]):
        if a.get("x") != b.get("x") or a.get("font-size") != b.get("font-size"):
            continue
        dy = float(b.get("y")) - float(a.get("y"))
        last = (a.text or "").rsplit(" ", 1)[-1]
        if 0 < dy <= 14 and re.match(r"[+-]?[0-9]", last) and re.match(r"[0-9]", b.text or ""):
            check(False, "%s: a duration broken over two lines: %r / %r" % (schema, a.text, b.text))

    # The moment line: vertical, at the x of the bold "0" tick label, spanning the rows.
    moment = [el for el in root.iter(Q + "line") if el.get("class") == "moment"]
    check(len(moment) == 1, "%s: %d moment lines" % (schema, len(moment)))
    if moment:
        m = moment[0]
        check(m.get("x1") == m.get("x2"), "%s: moment line is not vertical" % schema)
        zero = [t for t in root.iter(Q + "text") if t.text == "0" and t.get("class") != "name"]
        check(zero and all(t.get("x") == m.get("x1") for t in zero),
              "%s: moment line not at the 0 tick" % schema)
        ys = [float(t.get("y")) for g in root.iter(Q + "g") if g.get("class") in ("event", "column")
              for t in g.findall(Q + "text")]
        check(ys and float(m.get("y1")) < min(ys) and float(m.get("y2")) > max(ys),
              "%s: moment line does not span the rows" % schema)

    # Grouping agrees with the text report (the other writer of the same timeline).
    group_of = {}
    for g in root.iter(Q + "g"):
        cls = g.get("class") or ""
        if cls.startswith("columns-"):
            for row in g.findall(Q + "g"):
                title = row.find(Q + "title").text
                group_of[title] = cls
    lines = report.splitlines()
    for c in columns:
        if "\n" in c or "\t" in c:
            continue  # the text report escapes these; the picture shows spaces
        line = next((l for l in lines if l.startswith("  " + c + " ")), None)
        if line is None:
            continue
        want = next((grp for words, grp in VERDICT_GROUP if words in line[len(c) + 2:]), None)
        got = next((grp for title, grp in group_of.items() if title.startswith("column %s: " % c)), None)
        check(want is None or want == got, "%s: column %r is in %s, text report says %s"
              % (schema, c, got, want))


def main():
    exe = sys.argv[1]
    with tempfile.TemporaryDirectory() as tmp:
        for schema in sys.argv[2:]:
            check_schema(exe, schema, tmp)
            print("checked", schema)
    if failures:
        print("%d failures" % len(failures))
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
