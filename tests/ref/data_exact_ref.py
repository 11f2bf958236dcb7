#!/usr/bin/env python3
"""Cross-check of `knowable check --data` end to end (SPEC §4.7, §10), on the
data sets scikit-learn ships (no download):

1. A numeric target is cut into quantile bins, never taken as hundreds of
   classes: scikit-learn's diabetes data (load_diabetes, 442 rows, a target
   with 214 distinct values, 10 numeric features).  The bins follow the rule
   documented in src/data/stats.h (cut points at ranks floor(m * b / bins)
   of the sorted values, a value goes above every cut point <= it), written
   here with numpy; the target in 5 bins, each feature in as many bins as
   5 rows per cell allow, at most 10.  Reference for U = I(Y; X) / H(Y):
   sklearn.metrics.mutual_info_score (nats) for I and for H (I(Y; Y)).
   Each figure must agree within 0.0005 (messages print three decimals).

2. The counting rules are exact over every row, even with --max-rows far
   below the row count: on scikit-learn's breast-cancer data
   (load_breast_cancer, 569 rows) with five features cut into quantile
   categories (pandas.qcut), the first three marked quasi-identifiers, every
   fourth row on the test side, and --max-rows 50:
   - k-anonymity (Sweeney, 2002): reference pandas DataFrame.groupby(...).size()
     over all rows: smallest group, rows and groups below k, groups;
   - rows shared across the split: reference pandas, test rows whose tuple
     of feature values occurs among the training rows (MultiIndex.isin);
   - entities in both splits: reference pandas, values of the entity column
     found on both sides.

  data_exact_ref.py KNOWABLE   (exit 77 when numpy, pandas or scikit-learn is missing)
"""
import json
import os
import re
import subprocess
import sys
import tempfile

try:
    import numpy as np
    import pandas as pd
    from sklearn.datasets import load_breast_cancer, load_diabetes
    from sklearn.metrics import mutual_info_score
except ImportError as e:
    print("skipped: %s" % e)
    sys.exit(77)

RULES = ("knowable_rulebook: 1\nthresholds:\n  separation_auc: 0.5\n  uncertainty: 0.0\n"
         "  missingness_auc: 0.5\n  segment_uncertainty: 0.0\n  min_group_size: %d\n")


def quantile_bins(v, bins):
    """The documented binning rule of kn_quantile_bins (src/data/stats.h)."""
    s = np.sort(v)
    m = len(s)
    cuts = []
    for b in range(1, bins):
        c = s[(m * b) // bins]
        if c > s[0] and (not cuts or c > cuts[-1]):
            cuts.append(c)
    return np.searchsorted(np.array(cuts), v, side="right") + 1


def run(knowable, tmp, csv_name, schema, rules, extra=()):
    with open(os.path.join(tmp, "s.knowable.yaml"), "w") as f:
        f.write(schema)
    with open(os.path.join(tmp, "rules.yaml"), "w") as f:
        f.write(rules)
    res = subprocess.run([knowable, "check", "--rulebook", "rules.yaml", "--format", "json", *extra,
                          "--data", csv_name, "s.knowable.yaml"], capture_output=True, text=True, cwd=tmp)
    return json.loads(res.stdout)


def check_binned_target(knowable, tmp, bad):
    d = load_diabetes()
    X = pd.DataFrame(d.data, columns=["f%d" % i for i in range(10)])
    y = d.target
    df = pd.concat([pd.DataFrame({"progression": y}), X], axis=1)
    df.to_csv(os.path.join(tmp, "diabetes.csv"), index=False)
    cols = "".join("  f%d:\n    type: number\n    known: seen\n" % i for i in range(10))
    schema = ("knowable: 1\ndataset: diabetes\nprediction:\n  moment: seen\n  target: progression\n"
              "events:\n  seen: {}\n  told:\n    after: seen\ncolumns:\n  progression:\n"
              "    role: target\n    type: number\n    known: told\n" + cols)
    out = run(knowable, tmp, "diabetes.csv", schema, RULES % 5)
    yb = quantile_bins(y, 5)
    classes = len(np.unique(yb))
    n = 0
    for dg in out["diagnostics"]:
        m = re.search(r"U\(progression \| (f\d)\) ([0-9.]+)", dg["message"])
        if dg["rule"] != "lone-feature-separates" or not m:
            continue
        c = m.group(1)
        bins = min(10, len(X) // (5 * classes))
        xb = quantile_bins(X[c].to_numpy(dtype=np.float32).astype(float), bins)
        # reference: sklearn.metrics.mutual_info_score (natural log)
        ref = mutual_info_score(yb, xb) / mutual_info_score(yb, yb)
        got = float(m.group(2))
        n += 1
        if abs(got - ref) > 0.0005:
            bad.append("diabetes %s: knowable %.3f, scikit-learn %.6f" % (c, got, ref))
        if "5 quantile bins" not in " ".join(nt["message"] for nt in dg["notes"]):
            bad.append("diabetes %s: no note that the target was binned" % c)
    if n != 10:
        bad.append("diabetes: %d U figures, want 10" % n)
    return n


def check_exact_counts(knowable, tmp, bad):
    d = load_breast_cancer()
    X = pd.DataFrame(d.data, columns=["f%02d" % i for i in range(30)])
    cats = pd.DataFrame({"c%d" % i: pd.qcut(X["f%02d" % (i + 10)], 3 + i, labels=False,
                                            duplicates="drop").astype(int) for i in range(5)})
    side = np.where(np.arange(len(X)) % 4 == 0, "test", "train")
    entity = cats["c4"].astype(str).radd("E")
    df = pd.concat([pd.DataFrame({"diagnosis": d.target, "split": side, "owner": entity}), cats], axis=1)
    df.to_csv(os.path.join(tmp, "bc.csv"), index=False)
    qi = "    quasi_identifier: true\n"
    cols = "".join("  c%d:\n    type: category\n    known: seen\n%s" % (i, qi if i < 3 else "") for i in range(5))
    schema = ("knowable: 1\ndataset: bc\nprediction:\n  moment: seen\n  target: diagnosis\n  entity: owner\n"
              "events:\n  seen: {}\n  told:\n    after: seen\ncolumns:\n  diagnosis:\n"
              "    role: target\n    type: category\n    known: told\n  split:\n    role: split\n"
              "  owner:\n    role: identifier\n" + cols
              + "split:\n  method: group\n  column: split\n  group_column: owner\n")
    k = 12
    out = run(knowable, tmp, "bc.csv", schema, RULES % k, ("--max-rows", "50"))
    msgs = {dg["rule"]: dg["message"] for dg in out["diagnostics"]}
    if out["summary"].get("data", {}).get("sample_rows") != 50:
        bad.append("breast cancer: the JSON summary does not say the sample had 50 rows")
    # reference: pandas groupby sizes over every row
    sizes = df.groupby(["c0", "c1", "c2"]).size()
    small = sizes[sizes < k]
    want = (int(sizes.min()), int(small.sum()), len(df), int(len(small)), int(len(sizes)))
    m = re.search(r"the smallest has (\d+) rows? .*; (\d+) of (\d+) rows sit in (\d+) of (\d+) groups",
                  msgs.get("small-quasi-identifier-groups", ""))
    got = tuple(int(g) for g in m.groups()) if m else None
    if got != want:
        bad.append("k-anonymity: knowable %r, pandas %r" % (got, want))
    # reference: pandas, test rows whose feature tuple occurs in training
    feats = ["c%d" % i for i in range(5)]
    train = pd.MultiIndex.from_frame(df.loc[df.split == "train", feats])
    test = pd.MultiIndex.from_frame(df.loc[df.split == "test", feats])
    shared = test.isin(train)
    want = (int(shared.sum()), len(test), len(set(test[shared])))
    m = re.search(r"(\d+) of (\d+) test rows repeats? .* \((\d+) distinct rows?",
                  msgs.get("rows-shared-across-split", ""))
    got = tuple(int(g) for g in m.groups()) if m else None
    if got != want:
        bad.append("rows shared across the split: knowable %r, pandas %r" % (got, want))
    # reference: pandas, entities with rows on both sides
    both = set(df.owner[df.split == "train"]) & set(df.owner[df.split == "test"])
    want = (len(both), int(df[(df.split == "test") & df.owner.isin(both)].shape[0]), len(test))
    m = re.search(r"(\d+) values? of the entity 'owner' (?:has|have) rows in training and in test \((\d+) of (\d+)",
                  msgs.get("entity-in-both-splits", ""))
    got = tuple(int(g) for g in m.groups()) if m else None
    if got != want:
        bad.append("entities in both splits: knowable %r, pandas %r" % (got, want))


def main():
    knowable = os.path.abspath(sys.argv[1])
    bad = []
    with tempfile.TemporaryDirectory() as tmp:
        n = check_binned_target(knowable, tmp, bad)
        check_exact_counts(knowable, tmp, bad)
    for b in bad:
        print("FAIL", b)
    print("compared %d binned-target U figures and 3 exact counts over every row" % n)
    sys.exit(1 if bad else 0)


if __name__ == "__main__":
    main()
