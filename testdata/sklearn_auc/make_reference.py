#!/usr/bin/python3
"""Reference ROC AUC values from sklearn.metrics.roc_auc_score (scikit-learn 1.2.1).

Run with Debian's interpreter: /usr/bin/python3 make_reference.py
Versions used for the committed reference.json are recorded in it (key
"versions"): Debian 12 python3-sklearn 1.2.1, python3-numpy 1.24.2.

Cases (numpy default_rng(19821982), drawn in this order):
  handmade   a fixed 12-value vector with ties inside and across classes.
  rounded    200 scores rounded to one decimal (many ties), classes with a shift.
  continuous 1000 Gaussian scores, positives shifted by 0.5.
  inverted   the continuous case with the scores negated (AUC = 1 − AUC).
"""
import json
import os
import sys

import numpy as np
import sklearn
from sklearn.metrics import roc_auc_score

here = os.path.dirname(os.path.abspath(__file__))
rng = np.random.default_rng(19821982)
cases = []


def add(name, y, s):
    cases.append({"name": name, "positive": [bool(v) for v in y],
                  "score": [float(v) for v in s], "auc": float(roc_auc_score(y, s))})


add("handmade", [1, 0, 1, 1, 0, 0, 1, 0, 0, 1, 0, 1],
    [0.9, 0.1, 0.5, 0.5, 0.5, 0.2, 0.8, 0.8, 0.3, 0.3, 0.3, 0.7])
y = rng.random(200) < 0.3
s = np.round(rng.normal(size=200) + 0.8 * y, 1)
add("rounded", y, s)
y = rng.random(1000) < 0.2
s = rng.normal(size=1000) + 0.5 * y
add("continuous", y, s)
add("inverted", y, -s)

out = {"versions": {"python": sys.version.split()[0], "numpy": np.__version__,
                    "sklearn": sklearn.__version__},
       "cases": cases}
with open(os.path.join(here, "reference.json"), "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
