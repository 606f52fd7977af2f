#!/usr/bin/python3
"""Pair scores on the points two subsample runs share (for sweep.PairOnCommon).

Run with Debian's interpreter: /usr/bin/python3 make_reference.py
Versions used for the committed reference.json are recorded in it (key
"versions"): Debian 12 python3-scipy 1.10.1, python3-numpy 1.24.2.

Input: layouts.csv (run, point, x, y), three runs of a plumb sweep of iris
(perplexity 10, random start, 80 % subsamples drawn by seeds 1-3), written
by `PLUMB_WRITE_FIXTURES=1 go test -run TestPairOnCommonReference ./sweep/`.
For every pair of runs: the input rows both hold (ascending), the two
layouts restricted to those rows in that order, then
  disparity  scipy.spatial.procrustes(a, b)[2]
  jaccard    mean over shared points of |N_a ∩ N_b| / |N_a ∪ N_b|, N the
             k = 15 nearest other shared points by Euclidean distance in
             that layout (numpy argsort, stable, so ties go to the lower row).
"""
import csv
import json
import os

import numpy as np
import scipy
from scipy.spatial import procrustes

here = os.path.dirname(os.path.abspath(__file__))
K = 15

runs = {}
order = []
with open(os.path.join(here, "layouts.csv"), newline="") as f:
    for row in csv.DictReader(f):
        r = row["run"]
        if r not in runs:
            runs[r] = {}
            order.append(r)
        runs[r][int(row["point"])] = (float(row["x"]), float(row["y"]))


def knn(y, k):
    d = ((y[:, None, :] - y[None, :, :]) ** 2).sum(-1)
    np.fill_diagonal(d, np.inf)
    return [set(np.argsort(d[i], kind="stable")[:k].tolist()) for i in range(len(y))]


pairs = []
for i in range(len(order)):
    for j in range(i + 1, len(order)):
        ra, rb = runs[order[i]], runs[order[j]]
        common = sorted(set(ra) & set(rb))
        a = np.array([ra[p] for p in common])
        b = np.array([rb[p] for p in common])
        _, _, disp = procrustes(a, b)
        na, nb = knn(a, K), knn(b, K)
        jac = float(np.mean([len(x & y) / len(x | y) for x, y in zip(na, nb)]))
        pairs.append({"A": order[i], "B": order[j], "common": len(common),
                      "disparity": float(disp), "jaccard": jac})

out = {"k": K, "pairs": pairs,
       "versions": {"python": os.sys.version.split()[0], "numpy": np.__version__, "scipy": scipy.__version__}}
with open(os.path.join(here, "reference.json"), "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
