#!/usr/bin/python3
"""Reference solution of the Van der Pol oscillator with mu = 1000.

    y1' = y2,  y2' = mu*(1 - y1**2)*y2 - y1,  y(0) = (2, 0),  t in [0, 3000]

(the classic form: relaxation period about (3 - 2 ln 2)*mu, so [0, 3000]
holds about two cycles)

computed with SciPy's Radau IIA integrator (Debian's python3-scipy) at
rtol = atol = 1e-12 with its exact Jacobian, restarted at every output time
so that each output is an end point of the integration (no interpolation). Writes
solve/testdata/vdp_mu1000.csv, which the Go tests read.

Usage: /usr/bin/python3 scripts/vdp_reference.py
"""
import os
import sys

import numpy as np
import scipy
from scipy.integrate import solve_ivp

MU = 1000.0
TIMES = np.arange(0.0, 3000.0 + 1, 500.0)


def f(t, y):
    return [y[1], MU * (1 - y[0] ** 2) * y[1] - y[0]]


def jac(t, y):
    return [[0.0, 1.0], [-2 * MU * y[0] * y[1] - 1, MU * (1 - y[0] ** 2)]]


def main():
    rows = [(0.0, 2.0, 0.0)]
    y = [2.0, 0.0]
    steps = 0
    for a, b in zip(TIMES[:-1], TIMES[1:]):
        sol = solve_ivp(f, (a, b), y, method="Radau", jac=jac, rtol=1e-12, atol=1e-12)
        if not sol.success:
            sys.exit("solve_ivp failed: " + sol.message)
        steps += len(sol.t) - 1
        y = sol.y[:, -1]
        rows.append((b, y[0], y[1]))
    out = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "solve", "testdata", "vdp_mu1000.csv")
    tmp = out + ".tmp"
    with open(tmp, "w") as fh:
        fh.write("# Van der Pol y1' = y2, y2' = mu*(1 - y1^2)*y2 - y1, mu = 1000, y(0) = (2, 0)\n")
        fh.write("# scipy %s, numpy %s: solve_ivp(method='Radau', rtol=1e-12, atol=1e-12, exact jac), restarted at each output time\n"
                 % (scipy.__version__, np.__version__))
        fh.write("# command: /usr/bin/python3 scripts/vdp_reference.py (%d steps)\n" % steps)
        fh.write("t,y1,y2\n")
        for t, y1, y2 in rows:
            fh.write("%.17g,%.17g,%.17g\n" % (t, y1, y2))
    os.replace(tmp, out)


if __name__ == "__main__":
    main()
