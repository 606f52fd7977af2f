#!/usr/bin/python3
"""Seeded Gaussian-mixture data for the engine benchmark (synthetic, not a reference).

    gmm_data.py N OUT.csv [--d 50] [--clusters 20] [--seed 1]

Cluster weights ~ Dirichlet(2·1), centres ~ N(0, 2²) per coordinate, points ~
N(centre, 1): overlapping-but-distinct clusters in 50 dimensions. Writes a CSV
with header id,cluster,f0..f{d-1} (5 significant digits), streamed in blocks.
Needs numpy only (Debian's python3-numpy, pulled in by python3-sklearn).
"""
import argparse
import os

import numpy as np

ap = argparse.ArgumentParser()
ap.add_argument("n", type=int)
ap.add_argument("out")
ap.add_argument("--d", type=int, default=50)
ap.add_argument("--clusters", type=int, default=20)
ap.add_argument("--seed", type=int, default=1)
a = ap.parse_args()

rng = np.random.default_rng(a.seed)
w = rng.dirichlet(np.full(a.clusters, 2.0))
centres = rng.normal(0.0, 2.0, size=(a.clusters, a.d))
tmp = a.out + ".tmp"
with open(tmp, "w") as f:
    f.write("id,cluster," + ",".join(f"f{j}" for j in range(a.d)) + "\n")
    block = 50000
    for lo in range(0, a.n, block):
        m = min(block, a.n - lo)
        lab = rng.choice(a.clusters, size=m, p=w)
        x = centres[lab] + rng.normal(size=(m, a.d))
        lines = []
        for i in range(m):
            lines.append(f"p{lo + i},c{lab[i]}," + ",".join(f"{v:.5g}" for v in x[i]))
        f.write("\n".join(lines) + "\n")
os.replace(tmp, a.out)
