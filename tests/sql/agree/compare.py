#!/usr/bin/python3
"""tests/sql/agree/compare.py MODE CSV.json CSV.stats DB.json DB.stats - do
the reports of the CSV file and of the database table agree?

The data findings (every diagnostic whose file is the data) are compared
by rule, subject and message with its example cut off (the first
offending value differs: a CSV file has a first line, a table has none);
counts, the figures in the messages, are exact.  The statistics
(KNOWABLE_TRACE_STATS lines: rule, column, statistic, value, rows) agree
to 1e-9 with the same rows.  The skipped statistics (the JSON summary)
are the same.

MODE sampled:N: the database run computed its statistics on a sample of
about N rows (--max-rows N on a larger table) and the CSV file's on every
row: the JSON summary says so (sample_rows within N +- 40 %, rows
exact), every statistical finding carries a note naming the sample, the
other findings are the same with the same counts (counted over every
row), every statistic was computed on at most sample_rows rows and is
within 0.15 of the CSV file's figure over all rows (a sample of a few
hundred rows: a loose bound that a biased or empty sample breaks).

MODE full: everything above, both ways.  MODE wide: the database run
read few groups per query (--max-rows), so its statistics come from the
engine's rank sums or are skipped, and its identifiers from a sample:
every AUC it has equals the CSV file's, the identifiers' and skipped
statistics are not compared, and the other findings are the same.
Exit 0 agree, 1 not (the differences are printed)."""
import json
import re
import sys

mode, csv_json, csv_stats, db_json, db_stats = sys.argv[1:6]
SAMPLED = {"identifier-segment-predicts"}
STATISTICAL = {"lone-feature-separates", "missingness-predicts", "identifier-segment-predicts"}


def findings(path):
    with open(path, encoding="utf-8") as f:
        report = json.load(f)
    notes_of[path] = [(d["rule"], [n["message"] for n in d.get("notes", [])]) for d in report["diagnostics"]]
    summary[path] = report["summary"].get("data", {})
    schema_files = set()
    out = []
    for d in report["diagnostics"]:
        if d["file"].endswith(".yaml"):
            schema_files.add(d["file"])
            continue
        msg = d["message"]
        msg = re.split(r"; the first, here, is | \(e\.g\. ", msg)[0]
        out.append((d["rule"], d["subject"], d["severity"], msg))
    skipped = sorted((s["rule"], s["subject"], s["statistic"]) for s in report["summary"].get("data", {}).get("skipped", []))
    return sorted(out), skipped, report["summary"].get("data", {}).get("rows")


def stats(path):
    out = {}
    with open(path, encoding="utf-8") as f:
        for line in f:
            if line.startswith("knowable-stat\t"):
                _, rule, subject, statistic, value, rows = line.rstrip("\n").split("\t")
                out[(rule, subject, statistic)] = (float(value), int(rows))
    return out


bad = []
notes_of, summary = {}, {}
sample_n = int(mode.split(":")[1]) if mode.startswith("sampled:") else 0
cf, cs, crows = findings(csv_json)
df, ds, drows = findings(db_json)
if crows != drows:
    bad.append("rows: CSV %s, database %s" % (crows, drows))
if sample_n:
    got = summary[db_json].get("sample_rows", 0)
    if not 0.6 * sample_n <= got <= 1.4 * sample_n or got >= drows:
        bad.append("sample_rows %s, not about %d of %s rows" % (got, sample_n, drows))
    for rule, notes in notes_of[db_json]:
        if rule in STATISTICAL and not any(("random sample of %d of the %d rows" % (got, drows)) in n for n in notes):
            bad.append("a %s finding without the note of the sample: %s" % (rule, notes))
if mode == "wide" or sample_n:
    cf = [f for f in cf if f[0] not in STATISTICAL]
    df = [f for f in df if f[0] not in STATISTICAL]
for f in cf:
    if f not in df:
        bad.append("only in the CSV report: %s" % (f,))
for f in df:
    if f not in cf:
        bad.append("only in the database report: %s" % (f,))
if mode == "full" and cs != ds:
    bad.append("skipped statistics differ:\n  CSV %s\n  database %s" % (cs, ds))

ct, dt = stats(csv_stats), stats(db_stats)
compared = 0
for key in sorted(set(ct) | set(dt)):
    if (mode == "wide" or sample_n) and (key[0] in SAMPLED or key not in dt):
        continue
    if key not in ct or key not in dt:
        bad.append("statistic %s only in the %s run" % (key, "CSV" if key in ct else "database"))
        continue
    (cv, cn), (dv, dn) = ct[key], dt[key]
    compared += 1
    if sample_n:
        if dn > summary[db_json].get("sample_rows", 0) or abs(cv - dv) > 0.15:
            bad.append("statistic %s: CSV %.6g over %d rows, the sample's %.6g over %d rows" % (key, cv, cn, dv, dn))
        continue
    if abs(cv - dv) > 1e-9 or cn != dn:
        bad.append("statistic %s: CSV %.12g over %d rows, database %.12g over %d rows" % (key, cv, cn, dv, dn))
if compared == 0:
    bad.append("no statistic was compared")
for b in bad:
    print("DIFFERENT: " + b)
print("%s: %d findings, %d statistics compared, %d differences" % (mode, len(df), compared, len(bad)))
sys.exit(1 if bad else 0)
