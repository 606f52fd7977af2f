#!/usr/bin/python3
"""Reference quantiles (numpy) and Spearman correlations (scipy) for package stability.

Run with Debian's interpreter: /usr/bin/python3 make_agreement.py
Versions used for the committed agreement.json are recorded in it (key "versions"):
Debian 12 python3-numpy 1.24.2, python3-scipy 1.10.1.

quantiles: numpy.quantile(v, q) with the default method ("linear", Hyndman & Fan
  definition 7) for vectors drawn from numpy default_rng(7), some with ties.
spearman: scipy.stats.spearmanr(x, y).correlation for vectors with and without
  ties (ties get mean ranks).
"""
import json
import os
import sys

import numpy as np
import scipy
import scipy.stats

here = os.path.dirname(os.path.abspath(__file__))
rng = np.random.default_rng(7)
qs = [0.0, 0.1, 0.25, 0.5, 0.75, 0.9, 1.0]
quant = []
for name, v in [("one", np.array([3.5])),
                ("two", np.array([2.0, -1.0])),
                ("five", rng.normal(size=5)),
                ("pairs45", rng.uniform(size=45)),
                ("ties", rng.integers(0, 4, size=20).astype(float))]:
    quant.append({"name": name, "v": v.tolist(), "q": qs,
                  "want": [float(np.quantile(v, q)) for q in qs]})
spear = []
for name, x, y in [("continuous", rng.normal(size=50), None),
                   ("ties_x", rng.integers(0, 5, size=40).astype(float), None),
                   ("ties_both", rng.integers(0, 3, size=30).astype(float),
                    rng.integers(0, 4, size=30).astype(float))]:
    if y is None:
        y = x + rng.normal(size=len(x))
    spear.append({"name": name, "x": x.tolist(), "y": y.tolist(),
                  "want": float(scipy.stats.spearmanr(x, y).correlation)})
out = {"versions": {"python": sys.version.split()[0], "numpy": np.__version__,
                    "scipy": scipy.__version__},
       "quantiles": quant, "spearman": spear}
with open(os.path.join(here, "agreement.json"), "w") as f:
    json.dump(out, f, indent=1)
print(out["versions"], [(s["name"], s["want"]) for s in spear])
