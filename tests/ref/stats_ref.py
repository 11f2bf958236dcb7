#!/usr/bin/python3
"""Cross-check of src/data/stats.c against scikit-learn, SciPy and pandas.

    stats_ref.py PATH/TO/stats_probe

Data: the data sets that scikit-learn ships with its package
(sklearn.datasets.load_breast_cancer and load_iris; no download), plus
seeded random data with many ties.  Every value must agree to 1e-9.

- ROC AUC: reference: sklearn.metrics.roc_auc_score, each of the 30
  breast-cancer features against its binary target, and seeded random
  scores with heavy ties; separation = max(AUC, 1 - AUC) from the same.
- uncertainty coefficient U(Y|X) = I(Y;X) / H(Y): reference:
  sklearn.metrics.mutual_info_score (natural log) for I and
  scipy.stats.entropy (natural log) of the class counts for H, on the
  iris features discretised into equal-width bins (numpy.histogram_bin_edges
  + numpy.digitize) and as raw values, against the 3-class target, and the
  breast-cancer features in quartiles against the binary target.
- k-anonymity (Sweeney, 2002): reference: pandas DataFrame.groupby(...).size()
  for the group sizes of discretised iris columns taken as quasi-identifiers.

Exits 0 when all agree, 1 on a difference, 77 when numpy, scipy,
scikit-learn or pandas, or the probe, is missing.
"""
import os
import random
import subprocess
import sys

try:
    import numpy as np
    import pandas as pd
    from scipy.stats import entropy
    from sklearn.datasets import load_breast_cancer, load_iris
    from sklearn.metrics import mutual_info_score, roc_auc_score
except ImportError as e:
    print("stats_ref.py: %s; skipped" % e)
    sys.exit(77)

TOL = 1e-9


def main():
    if len(sys.argv) < 2 or not os.access(sys.argv[1], os.X_OK):
        print("stats_ref.py: no probe given or not executable; skipped")
        sys.exit(77)
    probe = sys.argv[1]
    blocks = []  # (description, input text, checker)

    def auc_block(desc, scores, labels):
        text = "auc %d\n" % len(scores) + "".join(
            "%r %d\n" % (float(s), int(l)) for s, l in zip(scores, labels))
        want = roc_auc_score(labels, scores)  # reference: sklearn.metrics.roc_auc_score
        blocks.append((desc, text, ("auc", want, max(want, 1 - want))))

    def u_block(desc, xs, ys):
        xs = [str(x) for x in xs]
        ys = [str(y) for y in ys]
        text = "u %d\n" % len(xs) + "".join("%s\t%s\n" % (x, y) for x, y in zip(xs, ys))
        mi = mutual_info_score(ys, xs)  # reference: sklearn.metrics.mutual_info_score (nats)
        _, counts = np.unique(ys, return_counts=True)
        h = entropy(counts)  # reference: scipy.stats.entropy (natural log)
        u = mi / h if h > 0 else 0.0
        blocks.append((desc, text, ("u", u, mi, h)))

    def kanon_block(desc, frame, k):
        text = "kanon %d %d\n" % (len(frame), k) + "".join(
            "\t".join(str(v) for v in row) + "\n" for row in frame.itertuples(index=False))
        sizes = frame.groupby(list(frame.columns)).size()  # reference: pandas groupby sizes
        small = sizes[sizes < k]
        want = (int(sizes.min()), int(small.sum()), int(len(small)), int(len(sizes)))
        blocks.append((desc, text, ("kanon",) + want))

    # reference data: scikit-learn's bundled breast-cancer data set (569 rows, 30 features)
    bc = load_breast_cancer()
    for j, name in enumerate(bc.feature_names):
        auc_block("breast_cancer %s vs target (AUC)" % name, bc.data[:, j], bc.target)
        q = np.quantile(bc.data[:, j], [0.25, 0.5, 0.75])
        u_block("breast_cancer %s quartiles vs target (U)" % name,
                np.digitize(bc.data[:, j], q), bc.target)

    # reference data: scikit-learn's bundled iris data set (150 rows, 4 features, 3 classes)
    iris = load_iris()
    for j, name in enumerate(iris.feature_names):
        for bins in (3, 5, 10):
            edges = np.histogram_bin_edges(iris.data[:, j], bins=bins)[1:-1]
            u_block("iris %s in %d equal-width bins vs species (U)" % (name, bins),
                    np.digitize(iris.data[:, j], edges), iris.target)
        u_block("iris %s raw values vs species (U)" % name, iris.data[:, j], iris.target)
        # one class against the rest, for a binary AUC on iris as well
        auc_block("iris %s vs setosa (AUC)" % name, iris.data[:, j], iris.target == 0)
    binned = pd.DataFrame({
        name: np.digitize(iris.data[:, j], np.histogram_bin_edges(iris.data[:, j], bins=4)[1:-1])
        for j, name in enumerate(iris.feature_names)})
    for k in (2, 5, 10):
        kanon_block("iris 4 binned columns as quasi-identifiers, k=%d" % k, binned, k)
        kanon_block("iris 2 binned columns as quasi-identifiers, k=%d" % k,
                    binned.iloc[:, :2], k)

    # seeded random data with many ties (invented, to exercise tie groups)
    rng = random.Random(4177)
    for i in range(40):
        n = rng.randint(2, 3000)
        levels = rng.choice([2, 3, 10, 1000])
        scores = [rng.randint(0, levels) * rng.choice([1.0, -0.5]) for _ in range(n)]
        labels = [1 if rng.random() < rng.choice([0.5, 0.1]) else 0 for _ in range(n)]
        labels[0], labels[-1] = 0, 1
        auc_block("random ties #%d (seed 4177, n=%d)" % (i, n), scores, labels)
        xs = [rng.randint(0, rng.choice([1, 4, 50])) for _ in range(n)]
        ys = [rng.randint(0, rng.choice([1, 2, 5])) for _ in range(n)]
        u_block("random categories #%d (seed 4177, n=%d)" % (i, n), xs, ys)

    # larger inputs, above the 4,096 scores where the AUC switches from a
    # comparison sort to a radix sort: 32-bit keys when every score is a
    # 4-byte float, as the sample's numbers are (invented, seeded)
    rng = random.Random(4178)
    for i in range(6):
        n = rng.randint(5000, 20000)
        scores = [rng.randint(0, rng.choice([10, 1000, 10 ** 6])) * rng.choice([1.0, -0.25]) for _ in range(n)]
        labels = [1 if rng.random() < 0.3 else 0 for _ in range(n)]
        auc_block("large random ties #%d (seed 4178, n=%d)" % (i, n), scores, labels)
    # and scores that are not 4-byte floats (the 64-bit radix path)
    for i in range(3):
        n = rng.randint(5000, 20000)
        scores = [rng.random() * rng.choice([1.0, 1e-300, -3.0]) for _ in range(n)]
        labels = [1 if rng.random() < 0.4 else 0 for _ in range(n)]
        auc_block("large random doubles #%d (seed 4178, n=%d)" % (i, n), scores, labels)

    text = "".join(b[1] for b in blocks)
    res = subprocess.run([probe], input=text, capture_output=True, text=True, check=False)
    if res.returncode != 0:
        print("FAIL: probe exited %d: %s" % (res.returncode, res.stderr))
        sys.exit(1)
    got = res.stdout.splitlines()
    if len(got) != len(blocks):
        print("FAIL: %d answers for %d blocks" % (len(got), len(blocks)))
        sys.exit(1)
    failures = 0
    worst = {"auc": 0.0, "u": 0.0, "kanon": 0.0}
    counts = {"auc": 0, "u": 0, "kanon": 0}
    for (desc, _, want), line in zip(blocks, got):
        kind = want[0]
        counts[kind] += 1
        parts = line.split()
        try:
            if kind == "auc":
                vals = [float(parts[0]), float(parts[1])]
                ref = list(want[1:])
            elif kind == "u":
                vals = [float(parts[0]), float(parts[1]), float(parts[2])]
                ref = list(want[1:])
            else:
                vals = [int(p) for p in parts]
                ref = list(want[1:])
        except (ValueError, IndexError):
            vals, ref = None, list(want[1:])
        if vals is None or len(vals) != len(ref):
            failures += 1
            print("FAIL: %s: probe %r, reference %r" % (desc, line, ref))
            continue
        err = max(abs(a - b) for a, b in zip(vals, ref))
        worst[kind] = max(worst[kind], err)
        if err > TOL:
            failures += 1
            print("FAIL: %s: probe %r, reference %r" % (desc, vals, ref))
    print("AUC: %d comparisons with sklearn.metrics.roc_auc_score, largest difference %.3g"
          % (counts["auc"], worst["auc"]))
    print("U: %d comparisons with sklearn mutual_info_score / scipy entropy, largest difference %.3g"
          % (counts["u"], worst["u"]))
    print("k-anonymity: %d comparisons with pandas groupby sizes, largest difference %.3g"
          % (counts["kanon"], worst["kanon"]))
    if failures:
        print("%d failure(s)" % failures)
        sys.exit(1)
    print("all agree to %g" % TOL)


if __name__ == "__main__":
    main()
