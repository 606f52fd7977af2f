#!/usr/bin/python3
"""Reference Procrustes disparities from scipy.spatial.procrustes (SciPy 1.10).

Run with Debian's interpreter: /usr/bin/python3 make_reference.py
Versions used for the committed reference.json are recorded in it (key
"versions"): Debian 12 python3-scipy 1.10.1, python3-numpy 1.24.2.

Cases (numpy default_rng(19661975), drawn in this order):
  docstring   the example of scipy.spatial.procrustes' docstring:
              a = [[1,3],[1,2],[1,1],[2,1]], b = [[4,-2],[4,-3],[4,-4],[3,-4]],
              documented disparity 0 (round(disparity) == 0.0).
  random_nN   a, b independent standard Gaussian N×2 layouts, N in 3, 5, 10, 100, 1000.
  noisy_nN    b = similarity transform of a (random angle, reflection, scale, shift)
              plus Gaussian noise sd 0.1, N in 10, 1000.
  skew_n50    a Gaussian, b = a with x stretched ×3 (anisotropic, not a similarity).
For each case the file stores a, b (flat x0,y0,x1,y1,...), disparity(a, b) and
disparity(b, a), and scipy's standardised mtx2 for the docstring case.
"""
import json
import os
import sys

import numpy as np
import scipy
from scipy.spatial import procrustes

here = os.path.dirname(os.path.abspath(__file__))
rng = np.random.default_rng(19661975)
cases = []


def add(name, a, b):
    m1, m2, d = procrustes(a, b)
    _, _, d_rev = procrustes(b, a)
    c = {"name": name, "a": a.reshape(-1).tolist(), "b": b.reshape(-1).tolist(),
         "disparity": float(d), "disparity_reversed": float(d_rev)}
    if name == "docstring":
        c["mtx1"] = m1.reshape(-1).tolist()
        c["mtx2"] = m2.reshape(-1).tolist()
    cases.append(c)


add("docstring", np.array([[1, 3], [1, 2], [1, 1], [2, 1]], "d"),
    np.array([[4, -2], [4, -3], [4, -4], [3, -4]], "d"))
for n in [3, 5, 10, 100, 1000]:
    add("random_n%d" % n, rng.normal(size=(n, 2)), rng.normal(size=(n, 2)))
for n in [10, 1000]:
    a = rng.normal(size=(n, 2))
    th = rng.uniform(0, 2 * np.pi)
    R = np.array([[np.cos(th), np.sin(th)], [-np.sin(th), np.cos(th)]]) @ np.diag([1, -1])
    b = 2.5 * a @ R + np.array([3.0, -7.0]) + rng.normal(scale=0.1, size=(n, 2))
    add("noisy_n%d" % n, a, b)
a = rng.normal(size=(50, 2))
add("skew_n50", a, a * np.array([3.0, 1.0]))

out = {"versions": {"python": sys.version.split()[0], "numpy": np.__version__,
                    "scipy": scipy.__version__}, "cases": cases}
with open(os.path.join(here, "reference.json"), "w") as f:
    json.dump(out, f, indent=1)
print(json.dumps(out["versions"]), [(c["name"], c["disparity"]) for c in cases])
