#!/usr/bin/python3
"""Reference perplexity calibration from scikit-learn for the tsne package tests.

Run with Debian's interpreter from the repository root (or anywhere):

    /usr/bin/python3 testdata/sklearn_calibration/make_fixtures.py

Needs Debian 12's python3-sklearn (1.2.1), python3-numpy and python3-scipy;
the versions used are written to versions.txt beside the fixtures.

Input: testdata/digits.csv (UCI optical recognition of handwritten digits, as
shipped in python3-sklearn), the 64 pixel counts as float64, no scaling.

What is computed, and how both sides get the same inputs
---------------------------------------------------------
* Neighbour sets. scikit-learn's TSNE would ask NearestNeighbors for
  k = min(n - 1, int(3 * perplexity + 1)) neighbours (one more than the
  floor(3 * perplexity) of van der Maaten 2014 that plumb uses), and the
  digits' integer pixels make distance ties common, so its own neighbour
  search could pick a different set at the k-th place. To compare the
  calibration itself, this script builds the neighbour sets once, with
  plumb's k = floor(3 * perplexity) and plumb's rule (ascending squared
  Euclidean distance, ties by the smaller index), from exact integer squared
  distances, and feeds those to scikit-learn. The Go test computes its own
  neighbours with tsne.ExactNeighbors and first checks that they are the
  same sets as listed here.
* Conditional P: sklearn.manifold._utils._binary_search_perplexity on the
  (n, k) matrix of squared distances in float32 (as
  sklearn.manifold._t_sne._joint_probabilities_nn passes them; the digits'
  squared distances are integers below 2**24, so float32 holds them
  exactly). Rows are reordered from scikit-learn's column-sorted CSR order to
  plumb's distance order.
* beta_i is not returned by scikit-learn; it is recovered exactly from its
  row as beta = ln(p_near / p_far) / (d_far^2 - d_near^2), using the nearest
  and the farthest neighbour.
* Joint P: sklearn.manifold._t_sne._joint_probabilities_nn on the CSR matrix
  of squared distances (what TSNE(method='barnes_hut') does after its
  neighbour search).
* Dense P: sklearn.manifold._t_sne._joint_probabilities on the full squared
  distance matrix of the first 300 digits (what TSNE(method='exact') does),
  returned condensed and floored at machine epsilon (2.2e-16), which is far
  below the tests' tolerance.

Files (CSV, header line, values with 15 significant digits):
  versions.txt               versions and settings
  neighbors_p<P>.csv         sample rows: point, rank, neighbor, sqdist,
                             p_cond (sklearn's p_j|i)
  beta_p<P>.csv              every point: point, beta
  joint_p<P>.csv             sample rows of the symmetric P: row, col, p
  joint_rowsum_p<P>.csv      every row sum of the symmetric P, and its nnz
  exact300_p30.csv           sample rows of the dense P for the first 300
                             digits: row, col, p
  exact300_rowsum_p30.csv    every row sum of that dense P
"""
import os
import platform
import sys

import numpy as np
import scipy
import scipy.sparse as sp
import sklearn
from scipy.spatial.distance import squareform
from sklearn.manifold import _utils
from sklearn.manifold._t_sne import _joint_probabilities, _joint_probabilities_nn

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
PERPLEXITIES = [10.0, 30.0]  # exactly representable in float32 (sklearn takes a C float)
EXACT_N = 300
EXACT_PERPLEXITY = 30.0


def load_digits():
    path = os.path.join(ROOT, "digits.csv")
    rows = np.loadtxt(path, delimiter=",", skiprows=1, usecols=range(2, 66), dtype=np.int64)
    return rows


def sq_distances(xi):
    """Exact squared Euclidean distances of integer data (int64 arithmetic)."""
    s = (xi * xi).sum(axis=1)
    d2 = s[:, None] + s[None, :] - 2 * (xi @ xi.T)
    assert (d2 >= 0).all()
    return d2


def neighbours(d2, k):
    """k nearest per row by (squared distance, index), self excluded."""
    n = d2.shape[0]
    idx = np.empty((n, k), dtype=np.int64)
    for i in range(n):
        cand = np.delete(np.arange(n), i)
        order = np.lexsort((cand, d2[i, cand]))  # primary key: distance
        idx[i] = cand[order[:k]]
    return idx


def fmt(v):
    return "%.15g" % v


def sample_points(n, d2nn):
    """Fixed sample: every 120th point plus the points with the smallest and
    largest nearest-neighbour distance (the easiest and hardest rows)."""
    pts = set(range(0, n, 120))
    pts.add(int(np.argmin(d2nn)))  # smallest: 0 would mean a duplicate point
    pts.add(int(np.argmax(d2nn)))
    return sorted(pts)


def main():
    xi = load_digits()
    n = xi.shape[0]
    d2 = sq_distances(xi)
    out = {}
    settings = []
    for perp in PERPLEXITIES:
        k = min(n - 1, int(np.floor(3 * perp)))
        idx = neighbours(d2, k)
        sqd = np.take_along_axis(d2, idx, axis=1).astype(np.float64)

        # CSR squared-distance graph, as TSNE hands to _joint_probabilities_nn.
        indptr = np.arange(0, n * k + 1, k)
        graph = sp.csr_matrix((sqd.ravel().copy(), idx.ravel().copy(), indptr), shape=(n, n))  # copies: sort_indices works in place
        graph.sort_indices()
        joint = _joint_probabilities_nn(graph.copy(), perp, 0)
        joint = sp.csr_matrix(joint)
        joint.sort_indices()

        # Conditional rows straight from the binary search, same inputs.
        g = graph.copy()
        g.sort_indices()
        cond_sorted = _utils._binary_search_perplexity(
            g.data.reshape(n, k).astype(np.float32, copy=False), perp, 0
        )
        cols_sorted = g.indices.reshape(n, k)
        # Reorder to plumb's (distance, index) order.
        cond = np.empty((n, k))
        for i in range(n):
            pos = {int(c): t for t, c in enumerate(cols_sorted[i])}
            cond[i] = [cond_sorted[i, pos[int(j)]] for j in idx[i]]

        pts = sample_points(n, sqd[:, 0])
        with open(os.path.join(HERE, "neighbors_p%g.csv" % perp), "w") as f:
            f.write("point,rank,neighbor,sqdist,p_cond\n")
            for i in pts:
                for r in range(k):
                    f.write("%d,%d,%d,%d,%s\n" % (i, r, idx[i, r], sqd[i, r], fmt(cond[i, r])))

        with open(os.path.join(HERE, "beta_p%g.csv" % perp), "w") as f:
            f.write("point,beta\n")
            for i in range(n):
                p = cond[i]
                # nearest and farthest neighbour with a positive probability
                a = 0
                b = max(t for t in range(k) if p[t] > 0)
                assert sqd[i, b] > sqd[i, a], "row %d: all neighbour distances equal" % i
                beta = np.log(p[a] / p[b]) / (sqd[i, b] - sqd[i, a])
                f.write("%d,%s\n" % (i, fmt(beta)))

        with open(os.path.join(HERE, "joint_p%g.csv" % perp), "w") as f:
            f.write("row,col,p\n")
            for i in pts:
                s, e = joint.indptr[i], joint.indptr[i + 1]
                for c, v in zip(joint.indices[s:e], joint.data[s:e]):
                    f.write("%d,%d,%s\n" % (i, c, fmt(v)))

        rowsum = np.asarray(joint.sum(axis=1)).ravel()
        nnz = np.diff(joint.indptr)
        with open(os.path.join(HERE, "joint_rowsum_p%g.csv" % perp), "w") as f:
            f.write("row,sum,nnz\n")
            for i in range(n):
                f.write("%d,%s,%d\n" % (i, fmt(rowsum[i]), nnz[i]))
        settings.append(
            "perplexity %g: k = %d neighbours, %d sample rows %s, joint nnz %d, joint sum %s"
            % (perp, k, len(pts), pts, joint.nnz, fmt(joint.sum()))
        )

    # Dense (exact) P on the first EXACT_N digits.
    d2e = d2[:EXACT_N, :EXACT_N].astype(np.float64)
    cond_p = _joint_probabilities(d2e, EXACT_PERPLEXITY, 0)
    dense = squareform(cond_p)  # zero diagonal
    pts = list(range(0, EXACT_N, 60)) + [EXACT_N - 1]
    with open(os.path.join(HERE, "exact300_p30.csv"), "w") as f:
        f.write("row,col,p\n")
        for i in pts:
            for j in range(EXACT_N):
                if j != i:
                    f.write("%d,%d,%s\n" % (i, j, fmt(dense[i, j])))
    with open(os.path.join(HERE, "exact300_rowsum_p30.csv"), "w") as f:
        f.write("row,sum\n")
        for i in range(EXACT_N):
            f.write("%d,%s\n" % (i, fmt(dense[i].sum())))
    settings.append(
        "exact: first %d digits, perplexity %g, sample rows %s, sum %s"
        % (EXACT_N, EXACT_PERPLEXITY, pts, fmt(dense.sum()))
    )

    with open(os.path.join(HERE, "versions.txt"), "w") as f:
        f.write("made by testdata/sklearn_calibration/make_fixtures.py\n")
        f.write("python %s (%s)\n" % (platform.python_version(), sys.executable))
        f.write("scikit-learn %s\n" % sklearn.__version__)
        f.write("numpy %s\n" % np.__version__)
        f.write("scipy %s\n" % scipy.__version__)
        f.write("input testdata/digits.csv, %d points x 64 pixels\n" % n)
        for s in settings:
            f.write(s + "\n")


if __name__ == "__main__":
    main()
