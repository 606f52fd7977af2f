#!/usr/bin/python3
"""Reference faithfulness scores on the digits data from scikit-learn 1.2.1.

Run with Debian's interpreter: /usr/bin/python3 make_reference.py
Versions used for the committed reference.json are recorded in it (key
"versions"): Debian 12 python3-sklearn 1.2.1, python3-numpy 1.24.2,
python3-scipy 1.10.1.

Inputs (all built here, stored in reference.json except X):
  X_raw   digits.csv pixel columns px0..px63 (integers 0..16; many tied distances).
  X_jit   X_raw + 1e-3 * u[i, f], u[i, f] = ((64 i + f) * 2654435761 mod 1000003) / 1000003,
          a fixed formula the Go test recomputes; it breaks every distance tie.
  layouts "pca_noise": first two principal components of X_raw (SVD of the centred
          matrix) plus Gaussian noise (sd 2, numpy default_rng(20261202));
          "pca_noise2": same PCs, a second noise draw;
          "random": standard Gaussian, unrelated to X.

Reference values:
  trust_jit[layout][k]   sklearn.manifold.trustworthiness(X_jit, Y, n_neighbors=k)
  cont_jit[layout][k]    sklearn.manifold.trustworthiness(Y, X_jit, n_neighbors=k)  (roles swapped)
  trust_raw[layout][k]   sklearn.manifold.trustworthiness(X_raw, Y, n_neighbors=k): ties in
                         input distance ranked in numpy's (unstable) argsort order
  trust_raw_stable[...]  the same lines of sklearn's code with np.argsort(kind="stable"),
                         i.e. ties ranked by smaller index
  recall_jit[layout][k]  mean |kNN_X(i) ∩ kNN_Y(i)| / k with sklearn NearestNeighbors
  label_acc[layout][...] leave-one-out accuracy of sklearn KNeighborsClassifier
                         (sklearn.model_selection.cross_val_predict, LeaveOneOut)
  label_agree[layout][k] share of points with > k/2 of their k map neighbours
                         (NearestNeighbors) carrying their own digit
  jaccard[pair][k]       mean Jaccard of NearestNeighbors kNN sets of two layouts
  spearman_first300      scipy.stats.spearmanr(pdist(X_jit[:300]), pdist(Y[:300])).correlation
"""
import csv
import json
import os
import sys

import numpy as np
import scipy
import scipy.stats
from scipy.spatial.distance import pdist
import sklearn
from sklearn.manifold import trustworthiness
from sklearn.metrics import pairwise_distances
from sklearn.model_selection import LeaveOneOut, cross_val_predict
from sklearn.neighbors import KNeighborsClassifier, NearestNeighbors

here = os.path.dirname(os.path.abspath(__file__))
with open(os.path.join(here, "..", "digits.csv")) as f:
    rows = list(csv.reader(f))
head = rows[0]
cols = [head.index("px%d" % c) for c in range(64)]
X_raw = np.array([[float(r[c]) for c in cols] for r in rows[1:]])
digit = [r[head.index("digit")] for r in rows[1:]]
n = X_raw.shape[0]

X_jit = X_raw.copy()
for i in range(n):
    for f in range(64):
        m = ((64 * i + f) * 2654435761) % 1000003
        X_jit[i, f] = X_raw[i, f] + 1e-3 * (m / 1000003.0)

Xc = X_raw - X_raw.mean(axis=0)
U, S, Vt = np.linalg.svd(Xc, full_matrices=False)
pcs = Xc @ Vt[:2].T
rng = np.random.default_rng(20261202)
layouts = {
    "pca_noise": pcs + rng.normal(scale=2.0, size=(n, 2)),
    "pca_noise2": pcs + rng.normal(scale=2.0, size=(n, 2)),
    "random": rng.normal(size=(n, 2)),
}


def trust_stable(X, Y, k):
    # sklearn 1.2.1 trustworthiness, verbatim except kind="stable".
    dist_X = pairwise_distances(X)
    np.fill_diagonal(dist_X, np.inf)
    ind_X = np.argsort(dist_X, axis=1, kind="stable")
    ind_Y = NearestNeighbors(n_neighbors=k).fit(Y).kneighbors(return_distance=False)
    inverted_index = np.zeros((n, n), dtype=int)
    ordered_indices = np.arange(n + 1)
    inverted_index[ordered_indices[:-1, np.newaxis], ind_X] = ordered_indices[1:]
    ranks = inverted_index[ordered_indices[:-1, np.newaxis], ind_Y] - k
    t = np.sum(ranks[ranks > 0])
    return 1.0 - t * (2.0 / (n * k * (2.0 * n - 3.0 * k - 1.0)))


def knn(Z, k):
    return NearestNeighbors(n_neighbors=k).fit(Z).kneighbors(return_distance=False)


# Sanity: X_jit has no tied distances per row (so argsort order is unique).
D = pairwise_distances(X_jit)
np.fill_diagonal(D, np.inf)
Ds = np.sort(D, axis=1)
gap = np.min(np.diff(Ds[:, :-1], axis=1))
assert gap > 0, "X_jit still has tied distances"

ks = [1, 5, 10, 30]
out = {
    "versions": {
        "python": sys.version.split()[0],
        "numpy": np.__version__,
        "scipy": scipy.__version__,
        "sklearn": sklearn.__version__,
    },
    "jitter": "X_jit[i,f] = X_raw[i,f] + 1e-3*(((64*i+f)*2654435761 mod 1000003)/1000003.0)",
    "min_distance_gap_jit": float(gap),
    "ks": ks,
    "layouts": {name: Y.reshape(-1).tolist() for name, Y in layouts.items()},
    "trust_jit": {}, "cont_jit": {}, "trust_raw": {}, "trust_raw_stable": {},
    "recall_jit": {}, "label_agree": {}, "label_acc": {}, "jaccard": {},
    "spearman_first300": {},
}
for name, Y in layouts.items():
    out["trust_jit"][name] = {str(k): trustworthiness(X_jit, Y, n_neighbors=k) for k in ks}
    out["cont_jit"][name] = {str(k): trustworthiness(Y, X_jit, n_neighbors=k) for k in ks}
    out["trust_raw"][name] = {str(k): trustworthiness(X_raw, Y, n_neighbors=k) for k in ks}
    out["trust_raw_stable"][name] = {str(k): trust_stable(X_raw, Y, k) for k in ks}
    # The stable variant agrees with sklearn where the input has no ties.
    for k in ks:
        assert trust_stable(X_jit, Y, k) == out["trust_jit"][name][str(k)]
    rec = {}
    agree = {}
    for k in ks:
        a, b = knn(X_jit, k), knn(Y, k)
        rec[str(k)] = float(np.mean([len(set(a[i]) & set(b[i])) for i in range(n)]) / k)
        lab = np.array(digit)
        agree[str(k)] = float(np.mean([(lab[b[i]] == lab[i]).sum() * 2 > k for i in range(n)]))
    out["recall_jit"][name] = rec
    out["label_agree"][name] = agree
    parity = np.array(["even" if int(d) % 2 == 0 else "odd" for d in digit])
    acc = {}
    for lname, lab, k in [("digit", np.array(digit), 1), ("parity", parity, 1),
                          ("parity", parity, 5), ("parity", parity, 15)]:
        pred = cross_val_predict(KNeighborsClassifier(n_neighbors=k), Y, lab, cv=LeaveOneOut())
        acc["%s_k%d" % (lname, k)] = float(np.mean(pred == lab))
    out["label_acc"][name] = acc
    out["spearman_first300"][name] = float(
        scipy.stats.spearmanr(pdist(X_jit[:300]), pdist(Y[:300])).correlation)

for a, b in [("pca_noise", "pca_noise2"), ("pca_noise", "random")]:
    jac = {}
    for k in [5, 15, 30]:
        na, nb = knn(layouts[a], k), knn(layouts[b], k)
        jac[str(k)] = float(np.mean([len(set(na[i]) & set(nb[i])) / len(set(na[i]) | set(nb[i]))
                                     for i in range(n)]))
    out["jaccard"][a + "|" + b] = jac

with open(os.path.join(here, "reference.json"), "w") as f:
    json.dump(out, f, indent=1)
print(json.dumps(out["versions"]), "written", os.path.join(here, "reference.json"))
