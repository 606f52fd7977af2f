#!/usr/bin/python3
"""Reference accuracy of scikit-learn's Barnes-Hut repulsion, for choosing plumb's default θ.

Run with Debian's interpreter from the repository root:

    /usr/bin/python3 testdata/sklearn_bh/make_fixture.py

Writes repulsion.json beside this script: three layouts of the 1797 digits
points (testdata/digits.csv) and, for each, the relative RMS error of the
repulsive force that scikit-learn's Barnes-Hut code computes at its default
angle θ = 0.5 and at θ = 0.3, against the exact sum in float64:

    err = ‖F_bh − F‖ / ‖F‖,   F_i = Σ_j w_ij² (y_i − y_j) / Z,   w_ij = 1/(1 + ‖y_i − y_j‖²)

scikit-learn's sklearn.manifold._barnes_hut_tsne.gradient is called with an
empty P (no attraction), so it returns −F_bh (float32, its working type).

Layouts:
  final    sklearn.manifold.TSNE(method='barnes_hut', init='pca',
           learning_rate='auto', perplexity=30, random_state=0) on the digits
           features (px0..px63, float64, no scaling): a converged map.
  uniform  numpy default_rng(5).uniform(-30, 30) per coordinate: no structure.
  compact  final × 0.05: a map as small as in the early, exaggerated phase.

Versions are recorded in the file.
"""
import csv
import json
import os
import platform

import numpy as np
import scipy
import sklearn
from sklearn.manifold import TSNE
from sklearn.manifold import _barnes_hut_tsne

here = os.path.dirname(os.path.abspath(__file__))
root = os.path.dirname(os.path.dirname(here))

with open(os.path.join(root, "testdata", "digits.csv")) as f:
    rows = list(csv.reader(f))
cols = [i for i, c in enumerate(rows[0]) if c.startswith("px")]
x = np.array([[float(r[i]) for i in cols] for r in rows[1:]])
n = len(x)

final = TSNE(method="barnes_hut", init="pca", learning_rate="auto", perplexity=30.0,
             random_state=0).fit_transform(x).astype(np.float64)
layouts = [
    ("final", final),
    ("uniform", np.random.default_rng(5).uniform(-30, 30, size=(n, 2))),
    ("compact", final * 0.05),
]


def exact_repulsion(y):
    d = y[:, None, :] - y[None, :, :]
    w = 1 / (1 + (d ** 2).sum(-1))
    np.fill_diagonal(w, 0)
    return ((w ** 2)[:, :, None] * d).sum(1) / w.sum()


out = {"versions": {"python": platform.python_version(), "sklearn": sklearn.__version__,
                    "numpy": np.__version__, "scipy": scipy.__version__},
       "n": n, "layouts": []}
for name, y in layouts:
    ref = exact_repulsion(y)
    errs = {}
    for theta in (0.3, 0.5):
        forces = np.zeros((n, 2), dtype=np.float32)
        _barnes_hut_tsne.gradient(np.zeros(0, dtype=np.float32), np.ascontiguousarray(y, dtype=np.float32),
                                  np.zeros(0, dtype=np.int64), np.zeros(n + 1, dtype=np.int64), forces,
                                  theta, 2, 0, dof=1, compute_error=False, num_threads=1)
        f = -forces.astype(np.float64)
        errs[str(theta)] = float(np.sqrt(((f - ref) ** 2).sum() / (ref ** 2).sum()))
    out["layouts"].append({"name": name, "y": y.ravel().tolist(), "sklearn_error": errs})

path = os.path.join(here, "repulsion.json")
with open(path + ".tmp", "w") as f:
    json.dump(out, f)
    f.write("\n")
os.replace(path + ".tmp", path)
