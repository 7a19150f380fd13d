#!/usr/bin/python3
"""The reference peer of the fit benchmark (bench/fit.md).

Fits the protease example (examples/protease-inhibitor.json) to the three
invented experiments of examples/fits/protease-fit.json (kon, kcat, kon_i,
koff_i and klock; 180 values of P with SDs) the way a SciPy user would:
scipy.optimize.least_squares (trust-region reflective, on the logarithms
of the constants within the spec's bounds, its default tolerances 1e-8,
its default forward-difference Jacobian) on scipy.integrate.solve_ivp
(BDF, with the exact Jacobian of the mass-action network, at the fit's
tolerances rtol 1e-8, atol 1e-12). The network is written out below; its
constants and starting amounts are read from the model file.

Prints one JSON object: seconds per start (wall and processor time), the estimates, the weighted sum
of squares, the evaluations. With --starts N it runs N starts (the spec's
start, then random log-uniform points in the bounds) on every core with
multiprocessing. internal/fitbench runs it; Debian's python3-scipy:

    /usr/bin/python3 scripts/protease_fit_peer.py [--starts N]
"""
import csv
import json
import multiprocessing
import os
import sys
import time

import numpy as np
import scipy
from scipy.integrate import solve_ivp
from scipy.optimize import least_squares

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..")
SPECIES = ["E", "S", "ES", "P", "I", "EI", "EIx"]
EST = ["kon", "kcat", "kon_i", "koff_i", "klock"]
RTOL, ATOL = 1e-8, 1e-12


def load():
    with open(os.path.join(ROOT, "examples", "protease-inhibitor.json")) as f:
        model = json.load(f)
    with open(os.path.join(ROOT, "examples", "fits", "protease-fit.json")) as f:
        spec = json.load(f)
    params = {p["name"]: p["value"] for p in model["parameters"]}
    y0 = np.array([next(s["initial"] for s in model["species"] if s["name"] == n) for n in SPECIES], float)
    exps = []
    for e in spec["experiments"]:
        z0 = y0.copy()
        for name, v in e.get("initial", {}).items():
            z0[SPECIES.index(name)] = v
        with open(os.path.join(ROOT, "examples", "fits", e["data"])) as f:
            rows = list(csv.DictReader(f))
        t = np.array([float(r["time"]) for r in rows])
        order = np.argsort(t, kind="stable")
        exps.append((z0, t[order], np.array([float(r["P"]) for r in rows])[order],
                     np.array([float(r["sd_P"]) for r in rows])[order]))
    lo, hi, start = [], [], []
    for q in spec["estimate"]:
        lo.append(q["lower"])
        hi.append(q["upper"])
        start.append(q.get("start", np.sqrt(q["lower"] * q["upper"])))
    return params, exps, np.log(lo), np.log(hi), np.log(start), spec.get("seed", 1)


PARAMS, EXPS, LO, HI, START, SEED = load()


def rates(k):
    kon, kcat, kon_i, koff_i, klock = k
    return kon, PARAMS["koff"], kcat, kon_i, koff_i, klock, PARAMS["kunlock"]


def rhs(t, y, kon, koff, kcat, kon_i, koff_i, klock, kunlock):
    e, s, es, p, i, ei, eix = y
    v1 = kon * e * s - koff * es
    v2 = kcat * es
    v3 = kon_i * e * i - koff_i * ei
    v4 = klock * ei - kunlock * eix
    return [-v1 + v2 - v3, -v1, v1 - v2, v2, -v3, v3 - v4, v4]


def jac(t, y, kon, koff, kcat, kon_i, koff_i, klock, kunlock):
    e, s, es, p, i, ei, eix = y
    j = np.zeros((7, 7))
    # v1 = kon e s − koff es; v3 = kon_i e i − koff_i ei; v4 = klock ei − kunlock eix
    dv1 = np.zeros(7); dv1[0], dv1[1], dv1[2] = kon * s, kon * e, -koff
    dv2 = np.zeros(7); dv2[2] = kcat
    dv3 = np.zeros(7); dv3[0], dv3[4], dv3[5] = kon_i * i, kon_i * e, -koff_i
    dv4 = np.zeros(7); dv4[5], dv4[6] = klock, -kunlock
    j[0] = -dv1 + dv2 - dv3
    j[1] = -dv1
    j[2] = dv1 - dv2
    j[3] = dv2
    j[4] = -dv3
    j[5] = dv3 - dv4
    j[6] = dv4
    return j


def residuals(u):
    args = rates(np.exp(u))
    out = []
    for z0, t, y, sd in EXPS:
        ts = np.unique(t)
        sol = solve_ivp(rhs, (0, ts[-1]), z0, method="BDF", t_eval=ts, jac=jac, args=args, rtol=RTOL, atol=ATOL)
        if not sol.success:
            return np.full(sum(len(e[1]) for e in EXPS), 1e10)
        p = sol.y[3, np.searchsorted(ts, t)]
        out.append((p - y) / sd)
    return np.concatenate(out)


def one(u0):
    t0, c0 = time.perf_counter(), time.process_time()
    res = least_squares(residuals, u0, bounds=(LO, HI), method="trf")
    return {"seconds": time.perf_counter() - t0, "cpu_seconds": time.process_time() - c0, "estimates": dict(zip(EST, np.exp(res.x).tolist())),
            "wssr": float(res.fun @ res.fun), "nfev": int(res.nfev), "njev": int(res.njev or 0),
            "status": int(res.status), "message": res.message}


def main():
    starts = 1
    if "--starts" in sys.argv:
        starts = int(sys.argv[sys.argv.index("--starts") + 1])
    rng = np.random.default_rng(SEED)
    points = [START] + [LO + (HI - LO) * rng.random(len(LO)) for _ in range(starts - 1)]
    t0 = time.perf_counter()
    if starts == 1:
        results = [one(START)]
    else:
        with multiprocessing.Pool(os.cpu_count()) as pool:
            results = pool.map(one, points)
    wall = time.perf_counter() - t0
    best = min(results, key=lambda r: r["wssr"])
    print(json.dumps({"scipy": scipy.__version__, "numpy": np.__version__, "starts": starts, "workers": os.cpu_count() if starts > 1 else 1,
                      "wall_seconds": wall, "cpu_seconds_total": sum(r["cpu_seconds"] for r in results),
                      "first_start": results[0], "best": best,
                      "n_data": int(sum(len(e[1]) for e in EXPS))}, indent=2))


if __name__ == "__main__":
    main()
