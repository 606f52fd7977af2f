#!/usr/bin/python3
"""Reference values for the tsne engine's optimiser, gradient and KL tests.

Run with Debian's interpreter from the repository root:

    /usr/bin/python3 testdata/sklearn_engine/make_fixtures.py          # both fixtures
    /usr/bin/python3 testdata/sklearn_engine/make_fixtures.py kl       # only kl_gradient.json
    /usr/bin/python3 testdata/sklearn_engine/make_fixtures.py optimizer # only optimizer.json
    /usr/bin/python3 testdata/sklearn_engine/make_fixtures.py digits   # only digits_tsne.json

Writes, beside this script:

kl_gradient.json  A fixed small problem: 30 points in 5 dimensions drawn from
                  numpy's default_rng(20260101), their exact joint P from
                  sklearn.manifold._t_sne._joint_probabilities (perplexity 7,
                  squared Euclidean distances), and a layout Y drawn from the same
                  generator (sd 1). Stores the dense P (row-major n*n, with the
                  MACHINE_EPSILON floor sklearn applies), Y, and the KL divergence
                  and gradient returned by sklearn's _kl_divergence (exact method,
                  degrees_of_freedom = 1, i.e. the gradient constant 4 included).
optimizer.json    The same P, an initial layout Y0 (sd 1e-4, same generator) and
                  the layout after scikit-learn's own two-phase schedule
                  (TSNE._tsne with method='exact': 20 iterations at early
                  exaggeration 12 and momentum 0.5, then 20 at momentum 0.8,
                  learning rate 10, min_grad_norm 0), with kl_divergence_;
                  checks that our gains/momentum update matches its
                  _gradient_descent. The run is kept short because t-SNE's
                  descent is chaotic: measured with this script's data,
                  shifting Y0 by 1e-3 (which only changes rounding) moves the
                  centred result by 2e-10 after 20+20 iterations at learning
                  rate 10, by 0.07 after 50+50, and by 67 after 250+250 at
                  learning rate 50. Also PCA initialisations of iris and
                  digits (PCA(svd_solver='full') and svd_solver='randomized',
                  random_state=0 as TSNE uses it, each scaled as TSNE does; digits:
                  every 10th point only).
digits_tsne.json  sklearn.manifold.TSNE(method='barnes_hut', init='pca',
                  learning_rate='auto', perplexity=30, n_iter=1000,
                  early_exaggeration=12, random_state=0) on testdata/digits.csv
                  (features px0..px63 as float64, no scaling): final kl_divergence_,
                  trustworthiness (sklearn.manifold.trustworthiness, k = 5),
                  10-NN leave-one-out label accuracy of the map, and wall time of
                  fit_transform on this machine.

Versions are recorded inside each JSON file.
"""
import csv
import json
import os
import platform
import sys
import time

import numpy as np
import scipy
import sklearn
from scipy.spatial.distance import pdist, squareform
from sklearn.decomposition import PCA
from sklearn.manifold import TSNE, trustworthiness
from sklearn.manifold import _t_sne
from sklearn.neighbors import NearestNeighbors

here = os.path.dirname(os.path.abspath(__file__))
root = os.path.dirname(os.path.dirname(here))


def versions():
    return {
        "python": platform.python_version(),
        "sklearn": sklearn.__version__,
        "numpy": np.__version__,
        "scipy": scipy.__version__,
    }


def write(name, obj):
    path = os.path.join(here, name)
    tmp = path + ".tmp"
    with open(tmp, "w") as f:
        json.dump(obj, f, indent=1)
        f.write("\n")
    os.replace(tmp, path)


def kl_fixture():
    rng = np.random.default_rng(20260101)
    n, d, perplexity = 30, 5, 7.0
    x = rng.normal(size=(n, d))
    y = rng.normal(size=(n, 2))
    dist = squareform(pdist(x, "sqeuclidean"))
    p_condensed = _t_sne._joint_probabilities(dist, perplexity, 0)
    kl, grad = _t_sne._kl_divergence(y.ravel().copy(), p_condensed, 1, n, 2)
    p_dense = squareform(p_condensed)
    write("kl_gradient.json", {
        "versions": versions(),
        "n": n,
        "perplexity": perplexity,
        "p": p_dense.ravel().tolist(),
        "y": y.ravel().tolist(),
        "kl": float(kl),
        "grad": grad.tolist(),
    })


def optimizer_fixture():
    rng = np.random.default_rng(20260101)
    n, d, perplexity = 30, 5, 7.0
    x = rng.normal(size=(n, d))
    rng.normal(size=(n, 2))  # the layout of kl_gradient.json
    y0 = 1e-4 * rng.normal(size=(n, 2))
    dist = squareform(pdist(x, "sqeuclidean"))
    p_condensed = _t_sne._joint_probabilities(dist, perplexity, 0)
    lr, ex_iters, n_iter = 10.0, 20, 40
    tsne = TSNE(method="exact", early_exaggeration=12.0, learning_rate=lr,
                n_iter=n_iter, min_grad_norm=0.0, perplexity=perplexity,
                init=y0.copy())
    tsne._EXPLORATION_N_ITER = ex_iters  # instance override of the class constant 250
    tsne.learning_rate_ = lr
    y = tsne._tsne(p_condensed.copy(), 1, n, X_embedded=y0.copy())
    pca = {}
    for name, label in (("iris", "species"), ("digits", "digit")):
        with open(os.path.join(root, "testdata", name + ".csv")) as f:
            rows = list(csv.reader(f))
        header, rows = rows[0], rows[1:]
        feat = [i for i, h in enumerate(header) if h not in ("id", label)]
        xd = np.array([[float(r[i]) for i in feat] for r in rows])
        for solver in ("full", "randomized"):
            e = PCA(n_components=2, svd_solver=solver, random_state=0).fit_transform(xd)
            e = e / np.std(e[:, 0]) * 1e-4
            if name == "digits":
                e = e[::10]  # every 10th point keeps the fixture small
            pca[name + "_" + solver] = e.ravel().tolist()
    write("optimizer.json", {
        "versions": versions(),
        "n": n,
        "p": squareform(p_condensed).ravel().tolist(),
        "y0": y0.ravel().tolist(),
        "learning_rate": lr,
        "early_exaggeration": 12.0,
        "exaggeration_iters": ex_iters,
        "n_iter": n_iter,
        "y": y.ravel().tolist(),
        "kl": float(tsne.kl_divergence_),
        "pca": pca,
    })


def digits_fixture():
    with open(os.path.join(root, "testdata", "digits.csv")) as f:
        rows = list(csv.reader(f))
    header, rows = rows[0], rows[1:]
    label_col = header.index("digit")
    feat = [i for i, h in enumerate(header) if h.startswith("px")]
    x = np.array([[float(r[i]) for i in feat] for r in rows])
    labels = np.array([r[label_col] for r in rows])
    tsne = TSNE(n_components=2, method="barnes_hut", init="pca",
                learning_rate="auto", perplexity=30.0, n_iter=1000,
                early_exaggeration=12.0, random_state=0)
    t0 = time.perf_counter()
    y = tsne.fit_transform(x)
    seconds = time.perf_counter() - t0
    tw = trustworthiness(x, y, n_neighbors=5)
    # 10-NN leave-one-out majority vote in the map (ties: smallest label string).
    nn = NearestNeighbors(n_neighbors=11).fit(y)
    _, idx = nn.kneighbors(y)
    correct = 0
    for i in range(len(y)):
        nbr = [j for j in idx[i] if j != i][:10]
        votes = {}
        for j in nbr:
            votes[labels[j]] = votes.get(labels[j], 0) + 1
        best = sorted(votes.items(), key=lambda kv: (-kv[1], kv[0]))[0][0]
        correct += best == labels[i]
    write("digits_tsne.json", {
        "versions": versions(),
        "settings": {"method": "barnes_hut", "init": "pca", "learning_rate": "auto",
                     "learning_rate_used": float(tsne.learning_rate_),
                     "perplexity": 30.0, "n_iter": 1000, "early_exaggeration": 12.0,
                     "angle": 0.5, "random_state": 0},
        "n": int(x.shape[0]),
        "kl": float(tsne.kl_divergence_),
        "trustworthiness_k5": float(tw),
        "label_accuracy_k10": correct / len(y),
        "seconds": seconds,
        "machine": {"cpus": os.cpu_count(), "platform": platform.platform()},
    })


if __name__ == "__main__":
    which = sys.argv[1:] or ["kl", "optimizer", "digits"]
    if "kl" in which:
        kl_fixture()
    if "optimizer" in which:
        optimizer_fixture()
    if "digits" in which:
        digits_fixture()
