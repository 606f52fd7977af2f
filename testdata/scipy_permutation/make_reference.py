"""Reference p-values for stability.CompareSets from scipy.stats.permutation_test.

Each case is a set of "runs" (random points standing in for layouts) with a
pair score for every pair of runs: the Euclidean distance between the points
(a dissimilarity) or exp(-distance) (a similarity). scipy enumerates every
split of the runs into the two sets (n_resamples=inf, permutation_type
'independent') and reports the one-sided ("greater") p-value of the shift

    mean(across pairs) - (mean(pairs within A) + mean(pairs within B)) / 2

(oriented so that larger means less alike; a set with one run has no
within term). Run with Debian's interpreter:

    /usr/bin/python3 testdata/scipy_permutation/make_reference.py
"""
import json
import platform

import numpy as np
import scipy
from scipy import stats


def shift(d, a, b, similar):
    sgn = -1.0 if similar else 1.0
    across = np.mean([d[i, j] for i in a for j in b])
    within = []
    for s in (a, b):
        if len(s) >= 2:
            within.append(np.mean([d[i, j] for x, i in enumerate(s) for j in s[x + 1:]]))
    return sgn * (across - np.mean(within))


def case(name, rng, m, k, offset, similar):
    pts = rng.normal(size=(m + k, 3))
    pts[m:, 0] += offset
    d = np.sqrt(((pts[:, None, :] - pts[None, :, :]) ** 2).sum(-1))
    if similar:
        d = np.exp(-d)
    idx = np.arange(m + k)

    def stat(x, y):
        return shift(d, [int(v) for v in x], [int(v) for v in y], similar)

    res = stats.permutation_test((idx[:m], idx[m:]), stat, permutation_type="independent",
                                 alternative="greater", n_resamples=np.inf, vectorized=False)
    return {"name": name, "runs_a": m, "runs_b": k, "similar": similar,
            "score": [float(v) for v in d.ravel()],
            "shift": float(res.statistic), "p": float(res.pvalue), "relabelings": int(len(res.null_distribution))}


def main():
    rng = np.random.default_rng(20261205)
    cases = [
        case("3v3 null", rng, 3, 3, 0.0, False),
        case("3v3 shifted", rng, 3, 3, 4.0, False),
        case("4v5 null", rng, 4, 5, 0.0, False),
        case("4v5 shifted similarity", rng, 4, 5, 1.5, True),
        case("2v4", rng, 2, 4, 2.0, False),
        case("5v2 similarity", rng, 5, 2, 1.0, True),
        case("6v6 shifted", rng, 6, 6, 1.0, False),
    ]
    out = {"source": "scipy.stats.permutation_test (exact enumeration)",
           "versions": {"python": platform.python_version(), "numpy": np.__version__, "scipy": scipy.__version__},
           "cases": cases}
    with open(__file__.replace("make_reference.py", "reference.json"), "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
