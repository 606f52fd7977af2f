#!/usr/bin/python3
"""Reference values for internal/dataset's Standardize and PCA on iris.

Run with Debian's interpreter from the repository root:
    /usr/bin/python3 testdata/inputs/make_pca_reference.py
Reads testdata/iris.csv (the four measurement columns), writes
testdata/inputs/iris_pca_sklearn.json with:
  versions                     the library versions used
  unscaled.explained_variance_ratio, unscaled.scores   PCA(n_components=4, svd_solver="full")
  standardized.values          StandardScaler().fit_transform (population sd)
  standardized.explained_variance_ratio, standardized.scores   PCA(4) of those
Floats are written with repr (shortest round-trip form).
Committed file made with: Debian 12 python3-sklearn 1.2.1, numpy 1.24.2, scipy 1.10.1.
"""
import csv
import json
import os

import numpy as np
import scipy
import sklearn
from sklearn.decomposition import PCA
from sklearn.preprocessing import StandardScaler

root = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
with open(os.path.join(root, "testdata", "iris.csv")) as f:
    rows = list(csv.DictReader(f))
cols = ["sepal_length", "sepal_width", "petal_length", "petal_width"]
X = np.array([[float(r[c]) for c in cols] for r in rows])


def pca(x):
    p = PCA(n_components=4, svd_solver="full").fit(x)
    return {
        "explained_variance_ratio": [float(v) for v in p.explained_variance_ratio_],
        "scores": [[float(v) for v in row] for row in p.transform(x)],
    }


Z = StandardScaler().fit_transform(X)
out = {
    "versions": {"sklearn": sklearn.__version__, "numpy": np.__version__, "scipy": scipy.__version__},
    "columns": cols,
    "unscaled": pca(X),
    "standardized": dict(values=[[float(v) for v in row] for row in Z], **pca(Z)),
}
with open(os.path.join(root, "testdata", "inputs", "iris_pca_sklearn.json"), "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
print("explained variance ratio (unscaled):", out["unscaled"]["explained_variance_ratio"])
