#!/usr/bin/python3
"""Run scikit-learn's TSNE with the benchmark settings and write the layout.

    sklearn_tsne.py IN.csv LABEL_COLUMN OUT.csv [--threads N]

Settings (the same as the plumb side of engine_bench.sh): perplexity 30,
init "pca", early_exaggeration 12 (scikit-learn 1.2.1 always exaggerates for
250 iterations), n_iter 1000, learning_rate "auto" = max(N/(4·12), 50) in
scikit-learn's convention, which like plumb's keeps the constant 4 in the
gradient, method "barnes_hut" (θ = 0.5), random_state 0. Writes OUT.csv
(header id,label,x,y) and OUT.csv.json with the final "kl"
(kl_divergence_, scikit-learn's own estimate), "fit_seconds" and versions.
"""
import argparse
import json
import os
import time

import numpy as np
import sklearn
from sklearn.manifold import TSNE

ap = argparse.ArgumentParser()
ap.add_argument("input")
ap.add_argument("label")
ap.add_argument("out")
ap.add_argument("--threads", type=int, default=os.cpu_count())
a = ap.parse_args()

with open(a.input) as f:
    head = f.readline().strip().split(",")
li, ii = head.index(a.label), head.index("id")
feat = [j for j in range(len(head)) if j not in (li, ii)]
ids = np.loadtxt(a.input, delimiter=",", skiprows=1, usecols=[ii], dtype=str)
labels = np.loadtxt(a.input, delimiter=",", skiprows=1, usecols=[li], dtype=str)
x = np.loadtxt(a.input, delimiter=",", skiprows=1, usecols=feat, dtype=np.float64)

t0 = time.time()
tsne = TSNE(n_components=2, perplexity=30.0, early_exaggeration=12.0, learning_rate="auto",
            n_iter=1000, init="pca", method="barnes_hut", angle=0.5, random_state=0,
            n_jobs=a.threads)
y = tsne.fit_transform(x)
fit = time.time() - t0

tmp = a.out + ".tmp"
with open(tmp, "w") as f:
    f.write("id,label,x,y\n")
    for i in range(len(y)):
        f.write(f"{ids[i]},{labels[i]},{y[i, 0]!r},{y[i, 1]!r}\n")
os.replace(tmp, a.out)
with open(a.out + ".json.tmp", "w") as f:
    json.dump({"kl": float(tsne.kl_divergence_), "fit_seconds": fit, "n_iter": int(tsne.n_iter_),
               "learning_rate": float(tsne.learning_rate_),
               "versions": {"sklearn": sklearn.__version__, "numpy": np.__version__}}, f)
os.replace(a.out + ".json.tmp", a.out + ".json")
