#!/usr/bin/env python3
"""The straightforward pandas + scikit-learn script a practitioner would write
to compute what `knowable check --data` computes (SPEC §4.7, §8), the
baseline of tests/bench/data_bench.sh:

  data_pandas.py SCHEMA.knowable.yaml DATA.csv

It reads the schema with PyYAML and the whole CSV with pandas.read_csv, then
for the declared columns: values that do not parse as the declared type or
match the format, timestamp features later than the moment column, ROC AUC
(sklearn.metrics.roc_auc_score) of each numeric feature and of each missing
indicator against a binary target, the uncertainty coefficient
mutual_info_score / entropy of the target for categorical features and for
the named groups of identifier formats, feature rows shared between training
and test (pandas.util.hash_pandas_object), entities on both sides, and the
smallest group over the quasi-identifiers (groupby().size()).  It prints one
line per finding.  Exit 77 when pandas, scikit-learn or PyYAML is missing."""
import re
import sys

try:
    import numpy as np
    import pandas as pd
    import yaml
    from sklearn.metrics import mutual_info_score, roc_auc_score
except ImportError as e:
    print("skipped: %s" % e, file=sys.stderr)
    sys.exit(77)

MISSING = ["", "NA", "N/A", "NaN", "null", "na", "n/a", "nan", "NULL", "Null"]  # missing_values, default rulebook


def entropy(y):
    p = y.value_counts(normalize=True).to_numpy()
    return float(-(p * np.log(p)).sum())


def main():
    schema = yaml.safe_load(open(sys.argv[1]))
    df = pd.read_csv(sys.argv[2], dtype=str, keep_default_na=False)
    cols = schema["columns"]
    pred = schema["prediction"]
    th = {"separation_auc": 0.95, "uncertainty": 0.8, "missingness_auc": 0.9,
          "segment_uncertainty": 0.5, "min_group_size": 5}
    findings = []

    for name in df.columns:
        if name not in cols:
            findings.append("column-not-in-schema %s" % name)
    for name in cols:
        if name not in df.columns:
            findings.append("column-not-in-data %s" % name)

    missing = {c: df[c].str.strip().isin(MISSING) for c in df.columns if c in cols}
    typed = {}
    for name, spec in cols.items():
        spec = spec or {}
        if name not in df.columns:
            continue
        t = spec.get("type")
        s = df[name]
        if t == "number":
            v = pd.to_numeric(s.where(~missing[name]), errors="coerce")
            bad = v.isna() & ~missing[name]
            typed[name] = v
        elif t in ("timestamp", "date"):
            v = pd.to_datetime(s.where(~missing[name]), errors="coerce", utc=True)
            bad = v.isna() & ~missing[name]
            typed[name] = v
        elif t == "boolean":
            low = s.str.strip().str.lower()
            bad = ~low.isin(["true", "false", "yes", "no", "1", "0"]) & ~missing[name]
            typed[name] = low.map({"true": 1, "yes": 1, "1": 1, "false": 0, "no": 0, "0": 0})
        else:
            bad = None
            typed[name] = s.where(~missing[name], "")
        if bad is not None and bad.any():
            findings.append("value-mismatch %s %d" % (name, int(bad.sum())))
        fmt = spec.get("format")
        if fmt:
            py = re.sub(r"\(\?<([A-Za-z_]\w*)>", r"(?P<\1>", fmt)
            ok = s.str.match(re.compile(py)).fillna(False) | missing[name]
            if (~ok).any():
                findings.append("value-mismatch format %s %d" % (name, int((~ok).sum())))

    moment = pred.get("moment_column")
    if moment in typed:
        for name, spec in cols.items():
            spec = spec or {}
            if name in typed and name != moment and spec.get("type") in ("timestamp", "date") and \
                    spec.get("role", "feature") == "feature":
                late = (typed[name] > typed[moment]).sum()
                if late:
                    findings.append("timestamp-after-moment %s %d" % (name, int(late)))

    target = pred["target"]
    y = typed[target]
    lab = ~missing[target]
    binary = y[lab].nunique() == 2
    yl = y[lab].astype(str)
    h_y = entropy(yl)
    features = [n for n, sp in cols.items() if (sp or {}).get("role", "feature") == "feature" and n in df.columns]
    for name in features:
        t = (cols[name] or {}).get("type")
        if t in ("number", "timestamp", "date"):
            v = typed[name][lab]
            if t != "number":
                v = v.astype("int64", errors="ignore")
            ok = v.notna()
            auc = roc_auc_score(yl[ok], v[ok].astype(float)) if binary else 0.5
            auc = max(auc, 1 - auc)
            if auc >= th["separation_auc"]:
                findings.append("lone-feature-separates %s %.3f" % (name, auc))
        else:
            u = mutual_info_score(yl, typed[name][lab].astype(str)) / h_y
            if u >= th["uncertainty"]:
                findings.append("lone-feature-separates %s %.3f" % (name, u))
        m = missing[name][lab]
        if m.any() and not m.all() and binary:
            auc = roc_auc_score(yl, m.astype(int))
            auc = max(auc, 1 - auc)
            if auc >= th["missingness_auc"]:
                findings.append("missingness-predicts %s %.3f" % (name, auc))

    for name, spec in cols.items():
        spec = spec or {}
        if spec.get("role") == "identifier" and spec.get("format") and name in df.columns:
            py = re.sub(r"\(\?<([A-Za-z_]\w*)>", r"(?P<\1>", spec["format"])
            parts = df[name][lab].str.extract(py)
            for g in parts.columns:
                seg = parts[g].fillna("")
                if 2 <= seg.nunique() <= 50:
                    u = mutual_info_score(yl, seg) / h_y
                    if u >= th["segment_uncertainty"]:
                        findings.append("identifier-segment-predicts %s.%s %.3f" % (name, g, u))

    split = (schema.get("split") or {}).get("column")
    if split in df.columns:
        side = df[split].str.strip().str.lower()
        train, test = side == "train", side == "test"
        h = pd.util.hash_pandas_object(df[features], index=False)
        shared = h[test].isin(set(h[train]))
        if shared.any():
            findings.append("rows-shared-across-split %d" % int(shared.sum()))
        ent = pred.get("entity")
        if ent in df.columns:
            both = set(df[ent][train]) & set(df[ent][test])
            if both:
                findings.append("entity-in-both-splits %d" % len(both))

    qi = [n for n, sp in cols.items() if (sp or {}).get("quasi_identifier") and n in df.columns]
    if qi:
        sizes = df.groupby(qi).size()
        if sizes.min() < th["min_group_size"]:
            findings.append("small-quasi-identifier-groups %d" % int(sizes.min()))

    for f in findings:
        print(f)
    print("%d findings over %d rows" % (len(findings), len(df)))


if __name__ == "__main__":
    main()
