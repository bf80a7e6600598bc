#!/usr/bin/env python3
"""scipy side of scripts/bench-ellipsometry.ts: fits the issue's benchmark case (test/fixtures/ellipsometry/
sinx-rough.psi-delta.csv: a Tauc-Lorentz film with thickness under a 50 % Bruggeman roughness layer on the
invented Si-like table, 3 angles x 500 wavelengths) with scipy.optimize.least_squares (trf, bounds, x_scale='jac',
2-point Jacobian) on the independent numpy model (scripts/stack_numpy.py, scripts/scipy_models.py), from the start
of test/fixtures/ellipsometry/sinx-rough.sample.json and the same default weights (0.05 deg, 0.1 deg).
Prints one JSON line per round: {"ms", "nfev", "x", "cost"}. Run: python3 scripts/bench_ellipsometry_scipy.py [ROUNDS]
"""
import json
import os
import sys
import time

import numpy as np
from scipy.optimize import least_squares

sys.path.insert(0, os.path.dirname(__file__))
from scipy_models import tauc_lorentz_nk  # noqa: E402
from stack_numpy import psi_delta  # noqa: E402

ROOT = os.path.join(os.path.dirname(__file__), "..")
FIX = os.path.join(ROOT, "test", "fixtures", "ellipsometry")
rows = [l.strip().split(",") for l in open(os.path.join(FIX, "sinx-rough.psi-delta.csv")) if l.strip() and not l.startswith("#")]
header, data = rows[0], np.array(rows[1:], dtype=float)
wl = data[:, 0]
angles = [float(h.split("_")[1]) for h in header[1::2]]
psi_m = [data[:, 1 + 2 * i] for i in range(len(angles))]
delta_m = [data[:, 2 + 2 * i] for i in range(len(angles))]
table = np.array([l.strip().split(",") for l in open(os.path.join(FIX, "si-like-substrate.csv")) if l[0].isdigit()], dtype=float)
substrate = {"n": np.interp(wl, table[:, 0], table[:, 1]), "k": np.interp(wl, table[:, 0], table[:, 2])}
sample = json.load(open(os.path.join(FIX, "sinx-rough.sample.json")))
film = sample["layers"][1]
names = ["rough", "d", "A", "E0", "C", "Eg", "eps_inf"]
x0 = [sample["layers"][0]["thickness_nm"], film["thickness_nm"]] + [film["material"]["parameters"][k] for k in ["A", "E0", "C", "Eg", "eps_inf"]]
lo = [0, 0, 0, 0.5, 0.05, 0.5, 0.1]
hi = [20, 500, 2000, 20, 20, 6, 20]


def bruggeman_half(N1):
    e1, e2 = N1**2, 1.0 + 0j
    b = 0.5 * e1 + 0.5 * e2
    disc = np.sqrt(b * b + 8 * e1 * e2)
    r0, r1 = (b + disc) / 4, (b - disc) / 4
    e = np.where(np.abs(r0.imag - r1.imag) > 1e-12 * np.abs(r0), np.where(r0.imag > r1.imag, r0, r1), np.where(r0.real > r1.real, r0, r1))
    return np.sqrt(e)


def residuals(x):
    N = tauc_lorentz_nk(wl, dict(zip(["A", "E0", "C", "Eg", "eps_inf"], x[2:])))
    R = bruggeman_half(N)
    case = {"wavelength_nm": wl, "ambient": {"n": np.ones_like(wl), "k": np.zeros_like(wl)},
            "layers": [{"n": R.real, "k": np.abs(R.imag), "thickness_nm": x[0]}, {"n": N.real, "k": np.abs(N.imag), "thickness_nm": x[1]}],
            "substrate": substrate}
    out = []
    for a, pm, dm in zip(angles, psi_m, delta_m):
        psi, delta = psi_delta(case, a)
        out.append((pm - psi) / 0.05)
        out.append(((dm - delta + 180) % 360 - 180) / 0.1)
    return np.concatenate(out)


rounds = int(sys.argv[1]) if len(sys.argv) > 1 else 1
for _ in range(rounds):
    t = time.perf_counter()
    c = time.process_time()  # CPU time of the process (all its threads): less sensitive to load than wall time
    fit = least_squares(residuals, x0, bounds=(lo, hi), x_scale="jac", method="trf")
    ms = (time.perf_counter() - t) * 1000
    cpu_ms = (time.process_time() - c) * 1000
    print(json.dumps({"ms": ms, "cpu_ms": cpu_ms, "nfev": int(fit.nfev), "x": dict(zip(names, fit.x.tolist())), "cost": float(2 * fit.cost)}), flush=True)
