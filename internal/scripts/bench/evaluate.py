#!/usr/bin/python3
"""Trustworthiness of layouts on a fixed subsample (scikit-learn 1.2.1).

    evaluate.py IN.csv LABEL_COLUMN LAYOUT.csv [LAYOUT.csv ...] [--max 5000] [--k 5]

Rows of every layout are matched to the input by id. The subsample (at most
--max points) is numpy default_rng(0).choice without replacement, the same
indices for every layout; sklearn.manifold.trustworthiness(X_sub, Y_sub,
n_neighbors=k) (Venna & Kaski 2001). Prints one value per layout, one per line.
"""
import argparse

import numpy as np
from sklearn.manifold import trustworthiness

ap = argparse.ArgumentParser()
ap.add_argument("input")
ap.add_argument("label")
ap.add_argument("layouts", nargs="+")
ap.add_argument("--max", type=int, default=5000)
ap.add_argument("--k", type=int, default=5)
a = ap.parse_args()

with open(a.input) as f:
    head = f.readline().strip().split(",")
ii, li = head.index("id"), head.index(a.label)
feat = [j for j in range(len(head)) if j not in (ii, li)]
ids = np.loadtxt(a.input, delimiter=",", skiprows=1, usecols=[ii], dtype=str)
n = len(ids)
sub = np.sort(np.random.default_rng(0).choice(n, size=min(n, a.max), replace=False))
x = np.loadtxt(a.input, delimiter=",", skiprows=1, usecols=feat, dtype=np.float64)[sub]
pos = {s: i for i, s in enumerate(ids)}
for path in a.layouts:
    lid = np.loadtxt(path, delimiter=",", skiprows=1, usecols=[0], dtype=str)
    ly = np.loadtxt(path, delimiter=",", skiprows=1, usecols=[2, 3], dtype=np.float64)
    y = np.empty((n, 2))
    y[[pos[s] for s in lid]] = ly
    print(f"{trustworthiness(x, y[sub], n_neighbors=a.k):.4f}")
