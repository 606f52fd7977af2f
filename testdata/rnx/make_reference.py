#!/usr/bin/python3
"""Reference rank-based quality curves R_NX(K) from the co-ranking matrix.

Run with Debian's interpreter: /usr/bin/python3 make_reference.py
Versions used for the committed reference.json are recorded in it (key
"versions"; Debian 12: Python 3.11.2, numpy 1.24.2, scikit-learn 1.2.1).

Definitions (J. A. Lee and M. Verleysen, "Quality assessment of dimensionality
reduction: rank-based criteria", Neurocomputing 72, 2009; J. A. Lee,
D. H. Peluffo-Ordonez and M. Verleysen, "Multi-scale similarities in stochastic
neighbour embedding", Neurocomputing 169, 2015):
  rho_ij  rank of j among the other points by input distance (1..N-1)
  r_ij    rank of j among the other points by map distance
          (Euclidean; ties ranked by the smaller index: np.argsort kind="stable")
  Q_kl    = |{(i, j) : rho_ij = k, r_ij = l}|       (co-ranking matrix)
  Q_NX(K) = sum_{k,l <= K} Q_kl / (K N)
  B_NX(K) = sum_{k,l <= K} sign(k - l) Q_kl / (K N)  (intrusions minus extrusions)
  R_NX(K) = ((N - 1) Q_NX(K) - K) / (N - 1 - K),     K = 1..N-2
  AUC     = sum_K R_NX(K)/K / sum_K 1/K

Cases (inputs with integer features, so that every squared distance is exact
in float64 whatever the order of summation, and ties fall the same way here
and in Go):
  digits_pca_noise  X = digits.csv px0..px63 (1797 x 64, integers 0..16);
                    Y = layout "pca_noise" of ../sklearn_trustworthiness/reference.json
                    (first two principal components plus Gaussian noise).
  iris_pca          X = 10 * iris.csv features, rounded (150 x 4 integers; iris has
                    duplicate rows, so exact input ties);
                    Y = sklearn.decomposition.PCA(2).fit_transform(X), stored here.
Stored: the whole curves for iris, and for digits K = 1..30 and every K on a
log grid (plus N-2), with the AUC of each.
"""
import csv
import json
import os
import platform

import numpy as np
import sklearn
from sklearn.decomposition import PCA

here = os.path.dirname(os.path.abspath(__file__))


def read(name):
    with open(os.path.join(here, "..", name)) as f:
        return list(csv.reader(f))


def ranks(D):
    n = D.shape[0]
    R = np.zeros((n, n), dtype=np.int64)
    for i in range(n):
        row = D[i].copy()
        row[i] = np.inf  # self last, never a neighbour
        order = np.argsort(row, kind="stable")
        R[i, order] = np.arange(1, n + 1)
    return R


def sqdist(Z):
    n = Z.shape[0]
    D = np.empty((n, n))
    for i in range(n):
        diff = Z - Z[i]
        D[i] = (diff * diff).sum(axis=1)
    return D


def curves(X, Y):
    n = X.shape[0]
    RX, RY = ranks(sqdist(X)), ranks(sqdist(Y))
    off = ~np.eye(n, dtype=bool)
    Q = np.zeros((n, n), dtype=np.int64)  # index 0 unused
    np.add.at(Q, (RX[off], RY[off]), 1)
    Q = Q[1:n, 1:n]
    k = np.arange(1, n)[:, None]
    l = np.arange(1, n)[None, :]
    S = np.sign(k - l) * Q
    cQ = Q.cumsum(0).cumsum(1)
    cS = S.cumsum(0).cumsum(1)
    K = np.arange(1, n - 1)
    qnx = np.array([cQ[m - 1, m - 1] for m in K]) / (K * n)
    bnx = np.array([cS[m - 1, m - 1] for m in K]) / (K * n)
    rnx = ((n - 1) * qnx - K) / (n - 1 - K)
    auc = (rnx / K).sum() / (1.0 / K).sum()
    return qnx, bnx, rnx, float(auc)


out = {
    "versions": {
        "python": platform.python_version(),
        "numpy": np.__version__,
        "sklearn": sklearn.__version__,
    },
    "cases": {},
}

rows = read("digits.csv")
head = rows[0]
cols = [head.index("px%d" % c) for c in range(64)]
Xd = np.array([[float(r[c]) for c in cols] for r in rows[1:]])
with open(os.path.join(here, "..", "sklearn_trustworthiness", "reference.json")) as f:
    Yd = np.array(json.load(f)["layouts"]["pca_noise"]).reshape(-1, 2)

rows = read("iris.csv")
head = rows[0]
feat = [c for c in range(len(head)) if head[c] not in ("id", "species")]
Xi = np.round(10 * np.array([[float(r[c]) for c in feat] for r in rows[1:]]))
Yi = PCA(n_components=2).fit_transform(Xi)

for name, X, Y, store, layout in [
    ("digits_pca_noise", Xd, Yd, None, False),
    ("iris_pca", Xi, Yi, "all", True),
]:
    qnx, bnx, rnx, auc = curves(X, Y)
    n = X.shape[0]
    if store == "all":
        ks = list(range(1, n - 1))
    else:
        ks = sorted(set(list(range(1, 31)) + [int(round(v)) for v in np.geomspace(31, n - 2, 40)] + [n - 2]))
    case = {
        "n": n,
        "auc": auc,
        "k": ks,
        "qnx": [float(qnx[m - 1]) for m in ks],
        "bnx": [float(bnx[m - 1]) for m in ks],
        "rnx": [float(rnx[m - 1]) for m in ks],
    }
    if layout:
        case["x"] = X.ravel().tolist()
        case["layout"] = Y.ravel().tolist()
    out["cases"][name] = case
    print(name, "n =", n, "AUC =", auc, "R_NX(1) =", rnx[0], "max R_NX =", rnx.max(), "at K =", int(rnx.argmax()) + 1)

with open(os.path.join(here, "reference.json"), "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
