#!/usr/bin/python3
"""Reference fit for app/calibrate's comparison with SciPy.

The invented assay of app/calibrate/testdata/scipy/enzyme-model.json: an
enzyme E turns substrate S into product P by Michaelis-Menten kinetics
(v = kcat*E*S/(Km + S)) while it inactivates at first order (rate kin*E).
The product is measured at two starting substrate levels.

With --make-data the script first writes the two data files (the truth
kcat = 30, Km = 40, kin = 0.05 plus Gaussian noise of SD 0.05 + 0.02*P,
numpy's default_rng(20261204)); the committed files were made so and need
not be made again.

It then fits kcat, Km and kin by weighted least squares with
scipy.optimize.least_squares (trust-region reflective, on the logarithms
of the constants within the spec's bounds, tolerances 1e-15) on
scipy.integrate.solve_ivp (BDF, rtol 1e-11, atol 1e-14), with the
Jacobian from forward sensitivities integrated with the state (written out
below by hand), and writes the estimates, the weighted sum of squares and
the standard errors sqrt(diag((J^T J)^-1)) (J the weighted residuals'
Jacobian by the constants) to scipy-reference.json. Run it from the
repository's root with Debian's python3 and python3-scipy:

    /usr/bin/python3 scripts/enzyme_fit_reference.py [--make-data]

The Go test (app/calibrate TestAgreesWithSciPy) reads the committed output,
so it runs without SciPy.
"""
import csv
import json
import os
import sys

import numpy as np
import scipy
from scipy.integrate import solve_ivp
from scipy.optimize import least_squares

HERE = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "app", "calibrate", "testdata", "scipy")
E0 = 0.1
TIMES = [2, 4, 6, 8, 10, 15, 20, 25, 30, 40, 50, 60]
EXPERIMENTS = [("low_substrate", "enzyme-s20.csv", 20.0), ("high_substrate", "enzyme-s100.csv", 100.0)]
NAMES = ["kcat", "Km", "kin"]
LOWER = np.array([1.0, 1.0, 0.001])
UPPER = np.array([1000.0, 1000.0, 1.0])
START = np.array([10.0, 10.0, 0.01])
RTOL, ATOL = 1e-11, 1e-14


def rhs(t, z, kcat, km, kin):
    """State (E, S, P) and its sensitivities to (kcat, Km, kin), 3x3."""
    e, s, _ = z[:3]
    sens = z[3:].reshape(3, 3)  # sens[j] = d(E,S,P)/d theta_j
    den = km + s
    v = kcat * e * s / den
    dv_de = kcat * s / den
    dv_ds = kcat * e * km / den**2
    dv_dq = [e * s / den, -kcat * e * s / den**2, 0.0]
    out = np.empty(12)
    out[:3] = [-kin * e, -v, v]
    for j in range(3):
        se, ss, _ = sens[j]
        dv = dv_de * se + dv_ds * ss + dv_dq[j]
        de = -kin * se - (e if j == 2 else 0.0)
        out[3 + 3 * j:6 + 3 * j] = [de, -dv, dv]
    return out


def jac(t, z, kcat, km, kin):
    """The exact Jacobian of rhs, for BDF's Newton iterations."""
    e, s, _ = z[:3]
    sens = z[3:].reshape(3, 3)
    den = km + s
    j = np.zeros((12, 12))
    dv_de = kcat * s / den
    dv_ds = kcat * e * km / den**2
    j[0, 0] = -kin
    j[1, 0], j[1, 1] = -dv_de, -dv_ds
    j[2, 0], j[2, 1] = dv_de, dv_ds
    # Second derivatives of v, for the sensitivities' rows.
    d2v_dede = 0.0
    d2v_deds = kcat * km / den**2
    d2v_dsds = -2 * kcat * e * km / den**3
    dq_de = [s / den, -kcat * s / den**2, 0.0]  # d(dv/dq_j)/dE
    dq_ds = [e * km / den**2, -kcat * e * (km - s) / den**3, 0.0]  # d(dv/dq_j)/dS
    for q in range(3):
        se, ss, _ = sens[q]
        r = 3 + 3 * q
        ddv_de = d2v_dede * se + d2v_deds * ss + dq_de[q]
        ddv_ds = d2v_deds * se + d2v_dsds * ss + dq_ds[q]
        # d(ds_E/dt)/d(E) etc.
        j[r, 0] = -1.0 if q == 2 else 0.0
        j[r, r] = -kin
        j[r + 1, 0], j[r + 1, 1] = -ddv_de, -ddv_ds
        j[r + 2, 0], j[r + 2, 1] = ddv_de, ddv_ds
        j[r + 1, r], j[r + 1, r + 1] = -dv_de, -dv_ds
        j[r + 2, r], j[r + 2, r + 1] = dv_de, dv_ds
    return j


def solve(theta, s0, times):
    z0 = np.zeros(12)
    z0[:3] = [E0, s0, 0.0]
    sol = solve_ivp(rhs, (0, max(times)), z0, method="BDF", t_eval=sorted(set(times)), args=tuple(theta),
                    jac=jac, rtol=RTOL, atol=ATOL)
    if not sol.success:
        raise RuntimeError(sol.message)
    return sol


def make_data():
    rng = np.random.default_rng(20261204)
    truth = (30.0, 40.0, 0.05)
    for _, name, s0 in EXPERIMENTS:
        sol = solve(truth, s0, TIMES)
        with open(os.path.join(HERE, name), "w", newline="") as f:
            w = csv.writer(f, lineterminator="\n")
            w.writerow(["time", "P", "sd_P"])
            for i, t in enumerate(sol.t):
                p = sol.y[2, i]
                sd = round(0.05 + 0.02 * p, 4)
                w.writerow([f"{t:g}", f"{p + sd * rng.standard_normal():.6g}", f"{sd:g}"])


def read_data():
    data = []
    for _, name, s0 in EXPERIMENTS:
        with open(os.path.join(HERE, name)) as f:
            rows = list(csv.DictReader(f))
        data.append((s0, np.array([float(r["time"]) for r in rows]), np.array([float(r["P"]) for r in rows]),
                     np.array([float(r["sd_P"]) for r in rows])))
    return data


def residuals_and_jacobian(theta, data):
    rs, js = [], []
    for s0, t, y, sd in data:
        sol = solve(theta, s0, list(t))
        idx = np.searchsorted(sol.t, t)
        p = sol.y[2, idx]
        dp = np.stack([sol.y[3 + 3 * q + 2, idx] for q in range(3)], axis=1)
        rs.append((p - y) / sd)
        js.append(dp / sd[:, None])
    return np.concatenate(rs), np.vstack(js)


def main():
    if "--make-data" in sys.argv[1:]:
        make_data()
    data = read_data()

    def fun(u):
        return residuals_and_jacobian(np.exp(u), data)[0]

    def jac_u(u):
        theta = np.exp(u)
        return residuals_and_jacobian(theta, data)[1] * theta[None, :]

    res = least_squares(fun, np.log(START), jac=jac_u, bounds=(np.log(LOWER), np.log(UPPER)), method="trf",
                        xtol=1e-15, ftol=1e-15, gtol=1e-15, x_scale="jac", max_nfev=1000)
    theta = np.exp(res.x)
    r, j = residuals_and_jacobian(theta, data)
    cov = np.linalg.inv(j.T @ j)
    out = {
        "note": "Made by scripts/enzyme_fit_reference.py: scipy.optimize.least_squares (trf, tolerances 1e-15, "
                "log scale) on scipy.integrate.solve_ivp (BDF, rtol 1e-11, atol 1e-14) with exact sensitivities.",
        "scipy": scipy.__version__,
        "numpy": np.__version__,
        "status": int(res.status),
        "message": res.message,
        "nfev": int(res.nfev),
        "estimates": {n: float(v) for n, v in zip(NAMES, theta)},
        "se": {n: float(np.sqrt(cov[k, k])) for k, n in enumerate(NAMES)},
        "wssr": float(r @ r),
        "n_data": int(r.size),
    }
    with open(os.path.join(HERE, "scipy-reference.json"), "w") as f:
        json.dump(out, f, indent=2)
        f.write("\n")
    print(json.dumps(out, indent=2))


if __name__ == "__main__":
    main()
