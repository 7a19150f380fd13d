#!/usr/bin/python3
"""Eigenvalues of the reduced Jacobians in matrices.json with numpy.linalg.eigvals
(Debian's python3-numpy, LAPACK's dgeev), written to numpy_eigvals.json.

Usage: numpy_eigvals.py [matrices.json [numpy_eigvals.json]]
The Go test TestEigenvaluesAgainstNumpy compares these with gonum's mat.Eigen.
"""
import json
import sys

import numpy

src = sys.argv[1] if len(sys.argv) > 1 else "matrices.json"
dst = sys.argv[2] if len(sys.argv) > 2 else "numpy_eigvals.json"
with open(src) as f:
    cases = json.load(f)
out = {"numpy": numpy.__version__, "cases": []}
for c in cases:
    a = numpy.array(c["matrix"], dtype=float)
    ev = numpy.linalg.eigvals(a)
    out["cases"].append({"name": c["name"], "eigenvalues": [[float(v.real), float(v.imag)] for v in ev]})
with open(dst, "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
