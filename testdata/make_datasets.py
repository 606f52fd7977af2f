#!/usr/bin/python3
"""Convert the open datasets shipped in Debian's python3-sklearn into headed CSVs.

Run with Debian's interpreter (/usr/bin/python3) after
`apt-get install python3-sklearn`. Versions used for the committed files:
Debian 12 python3-sklearn 1.2.1, python3-numpy 1.24.2.

digits.csv: UCI "Optical Recognition of Handwritten Digits" test set as shipped in
  sklearn/datasets/data/digits.csv.gz (1797 rows, 64 pixel counts 0..16, class 0..9).
iris.csv:   Fisher (1936) iris data as shipped in sklearn/datasets/data/iris.csv
  (150 rows, 4 measurements in cm, species).
Both are redistributed under the terms of the scikit-learn package (BSD-3-Clause);
the data sets themselves are public (UCI Machine Learning Repository).
"""
import csv
import gzip
import os
import sklearn

here = os.path.dirname(os.path.abspath(__file__))
src = os.path.join(os.path.dirname(sklearn.__file__), "datasets", "data")

with gzip.open(os.path.join(src, "digits.csv.gz"), "rt") as f:
    rows = [r for r in csv.reader(f) if r]
with open(os.path.join(here, "digits.csv"), "w", newline="") as f:
    w = csv.writer(f, lineterminator="\n")
    w.writerow(["id", "digit"] + ["px%d" % i for i in range(64)])
    for i, r in enumerate(rows):
        vals = [str(int(float(v))) for v in r]
        w.writerow(["d%04d" % i, vals[64]] + vals[:64])

names = ["setosa", "versicolor", "virginica"]
with open(os.path.join(src, "iris.csv")) as f:
    rows = list(csv.reader(f))[1:]
with open(os.path.join(here, "iris.csv"), "w", newline="") as f:
    w = csv.writer(f, lineterminator="\n")
    w.writerow(["id", "species", "sepal_length", "sepal_width", "petal_length", "petal_width"])
    for i, r in enumerate(rows):
        w.writerow(["iris%03d" % i, names[int(r[4])]] + r[:4])
print("sklearn", sklearn.__version__)
