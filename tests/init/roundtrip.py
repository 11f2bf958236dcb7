#!/usr/bin/python3
"""`knowable init DATA.csv` round trip (SPEC section 5).

usage: roundtrip.py KNOWABLE   (run from the tests/ folder)

For every CSV in tests/init/ the draft is written with -o and then:
  - it is valid YAML with one column entry per usable header name, names
    exactly as the header spells them (reference: PyYAML reads the draft,
    Python's csv module reads the header; RFC 4180 quoting).  Header names
    the schema cannot hold (empty, repeated) must appear as comments, not
    as entries; names that are not valid UTF-8 come back with U+FFFD;
  - `knowable check --format json` on it exits 1 (findings, not 2) and
    reports only what is left to fill in: unknown-reference for the
    placeholder event TODO_event, missing-known, and no rule of the schema
    family (yaml-syntax, schema-shape, duplicate-key, bad-duration,
    bad-pattern, include-refused, derivation-cycle);
  - for the invented files, the inferred types and roles are the ones their
    generator put in (listed below; the data were made up for this test);
  - the draft is the same on a second run (deterministic);
  - a missing file and an empty file fail with exit status 2.
Exits 77 (skipped) when PyYAML is missing.
"""
import csv
import io
import json
import os
import random
import subprocess
import sys
import tempfile

try:
    import yaml
except ImportError:
    print("PyYAML missing: skipped")
    sys.exit(77)

HERE = os.path.dirname(os.path.abspath(__file__))
SCHEMA_RULES = {"yaml-syntax", "schema-shape", "duplicate-key", "bad-duration", "bad-pattern",
                "include-refused", "derivation-cycle"}

# What the generators of the invented files put in: name -> (type, role).
EXPECTED = {
    "bakery-orders.csv": {
        "order_id": ("text", "identifier"),
        "ordered_at": ("timestamp", "timestamp"),
        "pickup_date": ("date", "timestamp"),
        "loaves": ("number", None),
        "paid_online": ("boolean", None),
        "total_price": ("number", None),
        "was_collected": ("boolean", "target"),
        "shop_code": ("category", "identifier"),
    },
    "bike-rentals.csv": {
        "rental_ref": ("number", "identifier"),
        "station": ("category", None),
        "unlocked_at": ("timestamp", "timestamp"),
        "minutes": ("number", None),
        "distance_km": ("number", None),
        "helmet": ("boolean", None),
        "rider_age": ("number", None),
        "returned_late": ("boolean", "target"),
        "split": ("category", "split"),
    },
}

failures = []


def check(cond, what):
    if not cond:
        failures.append(what)
        print("FAIL:", what)


def header_of(path):
    with open(path, "rb") as f:
        raw = f.read()
    text = raw.decode("utf-8", errors="replace")
    if text.startswith("\ufeff"):
        text = text[1:]
    return next(csv.reader(io.StringIO(text, newline="")))


def run(args):
    return subprocess.run(args, capture_output=True)


def roundtrip(exe, path, tmp):
    name = os.path.basename(path)
    draft = os.path.join(tmp, name + ".knowable.yaml")
    r = run([exe, "init", path, "-o", draft])
    check(r.returncode == 0, "%s: init exit %d: %s" % (name, r.returncode, r.stderr.decode(errors="replace")))
    if r.returncode != 0:
        return
    with open(draft, "rb") as f:
        text = f.read()
    again = run([exe, "init", path]).stdout
    check(again == text, "%s: a second run writes a different draft" % name)

    try:
        doc = yaml.safe_load(text.decode("utf-8"))
    except Exception as e:  # noqa: BLE001 - any reader error is the finding
        check(False, "%s: draft is not YAML: %s" % (name, e))
        return
    header = header_of(path)
    columns = doc.get("columns") or {}
    seen = set()
    usable = []
    for h in header:
        if h == "" or h in seen:
            continue
        seen.add(h)
        usable.append(h)
    check(list(columns.keys()) == usable, "%s: column entries %r, header %r" % (name, list(columns), usable))
    for h in header:
        if h == "":
            check(b"has no name" in text, "%s: empty header name not explained" % name)
    if len(seen) < len([h for h in header if h]):
        check(b"repeats the name" in text, "%s: repeated header name not explained" % name)
    check(doc.get("prediction", {}).get("target") in columns, "%s: target is not a column" % name)
    check(doc.get("prediction", {}).get("moment") in (doc.get("events") or {}), "%s: moment undefined" % name)

    r = run([exe, "check", "--format", "json", draft])
    check(r.returncode == 1, "%s: check exit %d (want 1): %s" % (name, r.returncode, r.stderr.decode(errors="replace")))
    try:
        report = json.loads(r.stdout)
    except ValueError:
        check(False, "%s: check --format json is not JSON" % name)
        return
    diags = report.get("diagnostics", [])
    for d in diags:
        rule = d.get("rule")
        check(rule not in SCHEMA_RULES, "%s: %s: %s" % (name, rule, d.get("message")))
        if rule == "unknown-reference":
            check("TODO_event" in d.get("message", ""), "%s: unknown-reference not for the placeholder: %s"
                  % (name, d.get("message")))
    n_todo = sum(1 for c in columns.values() if (c or {}).get("known") == "TODO_event")
    n_unknown = sum(1 for d in diags if d.get("rule") == "unknown-reference")
    check(n_unknown == n_todo, "%s: %d placeholders, %d unknown-reference findings" % (name, n_todo, n_unknown))

    for col, (typ, role) in EXPECTED.get(name, {}).items():
        entry = columns.get(col) or {}
        check(entry.get("type") == typ, "%s: %s has type %r, want %r" % (name, col, entry.get("type"), typ))
        check(entry.get("role") == role, "%s: %s has role %r, want %r" % (name, col, entry.get("role"), role))
    print("checked %s: %d columns, %d findings to fill in" % (name, len(columns), len(diags)))


def main():
    exe = os.path.abspath(sys.argv[1])
    with tempfile.TemporaryDirectory() as tmp:
        for f in sorted(os.listdir(HERE)):
            if f.endswith(".csv"):
                roundtrip(exe, os.path.join(HERE, f), tmp)
        # Seeded random header names from an alphabet of what YAML and CSV
        # treat specially (invented for this test, not data).
        rng = random.Random(8)
        alphabet = (list(":#&*!|>'\"%@`{}[],-?~ \t\n\r\\") + ["\x00"[:0] + chr(c) for c in range(1, 32)]
                    + ["\x7f", "\x85", "\u00e9", "\u2028", "\u2029", "\ufeff", "\ufffe", "\uffff",
                       "\U0001f6b2", "a", "b", "_", "0"])
        names = []
        while len(names) < 300:
            n = "".join(rng.choice(alphabet) for _ in range(rng.randint(1, 12)))
            if n not in names:
                names.append(n)
        gen = os.path.join(tmp, "random-headers.csv")
        with open(gen, "w", newline="", encoding="utf-8") as f:
            w = csv.writer(f, quoting=csv.QUOTE_ALL)
            w.writerow(names)
            w.writerow([str(i) for i in range(len(names))])
        roundtrip(exe, gen, tmp)
        r = run([exe, "init", os.path.join(tmp, "no-such-file.csv")])
        check(r.returncode == 2, "missing file: exit %d, want 2" % r.returncode)
        empty = os.path.join(tmp, "empty.csv")
        open(empty, "w").close()
        r = run([exe, "init", empty])
        check(r.returncode == 2, "empty file: exit %d, want 2" % r.returncode)
        # The draft never overwrites its input.
        src = os.path.join(tmp, "in.csv")
        with open(src, "w") as f:
            f.write("a,b\n1,2\n")
        r = run([exe, "init", src, "-o", src])
        with open(src) as f:
            check(f.read() == "a,b\n1,2\n", "init -o over its input changed the input")
        check(r.returncode == 2, "init -o over its input: exit %d, want 2" % r.returncode)
    if failures:
        print("%d failures" % len(failures))
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main())
