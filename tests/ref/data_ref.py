#!/usr/bin/env python3
"""Cross-check of `knowable check --data` end to end (SPEC §10): the figures in
the data findings against scikit-learn, on scikit-learn's copy of the
Wisconsin breast cancer data set (load_breast_cancer), written to CSV here
with 10% of one feature blanked out and five features cut into quantile
categories.  With a rulebook whose thresholds let every figure through:
  - ROC AUC of each numeric feature: reference sklearn.metrics.roc_auc_score
    (reported as max(AUC, 1 - AUC));
  - U(target | category): reference sklearn.metrics.mutual_info_score
    divided by the target's entropy (mutual_info_score(y, y));
  - AUC of the missing indicator: roc_auc_score on isna().
Messages print three decimals, so each figure must agree within 0.0005.

  data_ref.py KNOWABLE        (exit 77 when numpy, pandas or scikit-learn is missing)
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
    from sklearn.datasets import load_breast_cancer
    from sklearn.metrics import mutual_info_score, roc_auc_score
except ImportError as e:
    print("skipped: %s" % e)
    sys.exit(77)


def main():
    knowable = os.path.abspath(sys.argv[1])
    d = load_breast_cancer()
    X = pd.DataFrame(d.data, columns=["f%02d" % i for i in range(30)])
    y = np.where(d.target == 1, "benign", "malignant")
    rng = np.random.default_rng(1)
    X.loc[rng.random(len(X)) < 0.1, "f03"] = np.nan
    cats = {"c%d" % i: pd.qcut(X["f%02d" % (i + 10)], 4 + i, labels=False, duplicates="drop").astype(str)
            for i in range(5)}
    df = pd.concat([pd.DataFrame({"diagnosis": y}), X, pd.DataFrame(cats)], axis=1)
    cols = "".join("  f%02d:\n    type: number\n    known: seen\n" % i for i in range(30))
    cols += "".join("  c%d:\n    type: category\n    known: seen\n" % i for i in range(5))
    with tempfile.TemporaryDirectory() as tmp:
        df.to_csv(os.path.join(tmp, "bc.csv"), index=False, na_rep="")
        with open(os.path.join(tmp, "bc.knowable.yaml"), "w") as f:
            f.write("knowable: 1\ndataset: bc\nprediction:\n  moment: seen\n  target: diagnosis\n"
                    "events:\n  seen: {}\n  told:\n    after: seen\ncolumns:\n  diagnosis:\n"
                    "    role: target\n    type: category\n    known: told\n" + cols)
        with open(os.path.join(tmp, "rules.yaml"), "w") as f:
            f.write("knowable_rulebook: 1\nthresholds:\n  separation_auc: 0.5\n  uncertainty: 0.0\n"
                    "  missingness_auc: 0.5\n")
        out = subprocess.run([knowable, "check", "--rulebook", "rules.yaml", "--format", "json",
                              "--data", "bc.csv", "bc.knowable.yaml"], capture_output=True, text=True,
                             cwd=tmp).stdout
    diags = json.loads(out)["diagnostics"]
    yy = (y == "malignant").astype(int)
    seen = {"auc": 0, "u": 0, "missing": 0}
    bad = []
    for dg in diags:
        msg = dg["message"]
        m = re.search(r"ROC AUC ([0-9.]+)", msg)
        if dg["rule"] == "lone-feature-separates" and m:
            c = dg["subject"]
            ok = X[c].notna()
            ref = roc_auc_score(yy[ok], X[c][ok])
            ref, kind = max(ref, 1 - ref), "auc"
        elif re.search(r"U\(diagnosis \| (\w+)\) ([0-9.]+)", msg):
            m = re.search(r"U\(diagnosis \| (\w+)\) ([0-9.]+)", msg)
            ref = mutual_info_score(y, df[m.group(1)]) / mutual_info_score(y, y)
            m = re.match(r".*\) ([0-9.]+)", msg[:m.end()])
            kind = "u"
        elif re.search(r"AUC of the missing indicator ([0-9.]+)", msg):
            m = re.search(r"AUC of the missing indicator ([0-9.]+)", msg)
            ref = roc_auc_score(yy, X[dg["subject"]].isna())
            ref, kind = max(ref, 1 - ref), "missing"
        else:
            continue
        seen[kind] += 1
        got = float(m.group(1))
        if abs(got - ref) > 0.0005:
            bad.append("%s: knowable %.3f, scikit-learn %.6f" % (msg[:60], got, ref))
    for b in bad:
        print("FAIL", b)
    print("compared %(auc)d AUCs, %(u)d uncertainty coefficients, %(missing)d missing-indicator AUCs" % seen)
    if bad or seen != {"auc": 30, "u": 5, "missing": 1}:
        sys.exit(1)


if __name__ == "__main__":
    main()
