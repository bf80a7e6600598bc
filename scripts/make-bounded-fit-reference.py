#!/usr/bin/env python3
"""Bounded optima of scipy.optimize.least_squares(method='trf', bounds=...) for nkledger's fitter.

Each case: synthetic n,k data with 1-sigma columns (fixed seed), a start inside the bounds, and bounds that
exclude the unbounded optimum, so at least one parameter ends on a bound. scipy's trf optimum from the same
start is the reference: nkledger must reach a chi2 within 0.1 % of it (test/fit/bounded.test.ts) and report
the parameters on a bound as such. Writes test/reference/fit-bounded.json.
Run: python3 scripts/make-bounded-fit-reference.py   (scipy 1.17.1, numpy 2.4.6)
"""
import json
import os
import sys

import numpy as np
import scipy
from scipy.optimize import least_squares

sys.path.insert(0, os.path.dirname(__file__))
from scipy_models import lorentz_drude_nk, residuals, tauc_lorentz_nk  # noqa: E402

TL_TRUTH = {"A": 122.0, "E0": 3.45, "C": 2.54, "Eg": 1.2, "eps_inf": 1.15}
LD_TRUTH = {"lorentz.A": 25.0, "lorentz.E0": 5.0, "lorentz.Gamma": 0.6, "drude.Ep": 1.8, "drude.Gamma": 0.12, "eps_inf": 2.2}

CASES = [
    {
        # the best eps_inf (1.15) lies below the lower bound 1.6
        "name": "tauc-lorentz eps_inf lower bound",
        "model": "tauc-lorentz", "nk": tauc_lorentz_nk, "truth": TL_TRUTH,
        "start": {"A": 100.0, "E0": 3.6, "C": 2.2, "Eg": 1.3, "eps_inf": 2.0},
        "bounds": {"A": [0, 2000], "E0": [0.5, 20], "C": [0.05, 20], "Eg": [0.05, 12], "eps_inf": [1.6, 50]},
        "range_nm": [250, 1600], "points": 200, "sigma_n": 1e-3, "sigma_k": 5e-4,
    },
    {
        # Eg (1.2 eV) above an upper bound of 1.0 eV
        "name": "tauc-lorentz Eg upper bound",
        "model": "tauc-lorentz", "nk": tauc_lorentz_nk, "truth": TL_TRUTH,
        "start": {"A": 100.0, "E0": 3.6, "C": 2.2, "Eg": 0.9, "eps_inf": 1.4},
        "bounds": {"A": [0, 2000], "E0": [0.5, 20], "C": [0.05, 20], "Eg": [0.05, 1.0], "eps_inf": [0, 50]},
        "range_nm": [250, 1600], "points": 200, "sigma_n": 1e-3, "sigma_k": 5e-4,
    },
    {
        # a small Drude Gamma (0.12 eV) kept above 0.16 eV
        "name": "lorentz+drude Gamma lower bound",
        "model": "lorentz+drude", "nk": lorentz_drude_nk, "truth": LD_TRUTH,
        "start": {"lorentz.A": 20.0, "lorentz.E0": 5.3, "lorentz.Gamma": 0.8, "drude.Ep": 1.5, "drude.Gamma": 0.3, "eps_inf": 2.0},
        "bounds": {"lorentz.A": [0, 1e4], "lorentz.E0": [0.01, 40], "lorentz.Gamma": [0.001, 20], "drude.Ep": [0, 40], "drude.Gamma": [0.16, 10], "eps_inf": [0, 50]},
        "range_nm": [300, 2500], "points": 200, "sigma_n": 1e-3, "sigma_k": 1e-3,
    },
]


def main():
    out = {
        "source": f"scipy.optimize.least_squares(method='trf', bounds=..., x_scale='jac', ftol=xtol=gtol=1e-15), scipy {scipy.__version__}, numpy {np.__version__}",
        "script": "scripts/make-bounded-fit-reference.py",
        "cases": [],
    }
    for seed, case in enumerate(CASES, start=71):
        nm = np.linspace(*case["range_nm"], case["points"])
        N = case["nk"](nm, case["truth"])
        rng = np.random.default_rng(seed)
        n = N.real + rng.normal(0, case["sigma_n"], nm.size)
        k = N.imag + rng.normal(0, case["sigma_k"], nm.size)
        names = list(case["start"])
        f = residuals(case["nk"], names, {}, nm, n, k, case["sigma_n"], case["sigma_k"])
        lo = [case["bounds"][q][0] for q in names]
        hi = [case["bounds"][q][1] for q in names]
        res = least_squares(f, [case["start"][q] for q in names], method="trf", bounds=(lo, hi), x_scale="jac", ftol=1e-15, xtol=1e-15, gtol=1e-15, max_nfev=20000)
        chi2 = float(np.sum(res.fun**2))
        active = [q for q, a in zip(names, res.active_mask) if a != 0]
        out["cases"].append({
            "name": case["name"], "model": case["model"], "seed": seed,
            "truth": case["truth"], "start": case["start"], "bounds": case["bounds"],
            "wavelength_nm": nm.tolist(), "n": n.tolist(), "k": k.tolist(),
            "sigma_n": case["sigma_n"], "sigma_k": case["sigma_k"],
            "optimum": {"parameters": dict(zip(names, map(float, res.x))), "chi2": chi2, "active": active, "status": int(res.status), "nfev": int(res.nfev)},
        })
        print(case["name"], chi2, active, res.status)
    path = os.path.join(os.path.dirname(__file__), "..", "test", "reference", "fit-bounded.json")
    with open(path, "w") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
