#!/usr/bin/env python3
"""The scipy side of scripts/bench-fit.ts: reads the cases (data, sigmas, start) as JSON on stdin, fits
each with scipy.optimize.least_squares(method='lm') at its default tolerances, prints JSON with the median
time per fit and the final chi^2. Not run on its own."""
import json
import os
import sys
import time

import numpy as np
import scipy
from scipy.optimize import least_squares

sys.path.insert(0, os.path.dirname(__file__))
from scipy_models import residuals, sellmeier_nk, tauc_lorentz_nk  # noqa: E402

MODELS = {"tauc-lorentz": lambda nm, p: tauc_lorentz_nk(nm, p), "sellmeier3": lambda nm, p: sellmeier_nk(nm, p, 3)}


def main():
    cases = json.load(sys.stdin)
    out = []
    for c in cases:
        nm = np.array(c["wavelength_nm"])
        names = list(c["start"])
        sigma_k = np.array(c["sigma_k"]) if c["fit_k"] else None
        f_full = residuals(MODELS[c["kind"]], names, c["fixed"], nm, np.array(c["n"]), np.array(c["k"]), np.array(c["sigma_n"]), sigma_k if sigma_k is not None else 1.0)
        f = f_full if c["fit_k"] else (lambda x, g=f_full, m=nm.size: g(x)[:m])
        x0 = [c["start"][q] for q in names]
        times = []
        for _ in range(c["repeats"]):
            t0 = time.perf_counter()
            res = least_squares(f, x0, method="lm")
            times.append(time.perf_counter() - t0)
        out.append({"name": c["name"], "ms": 1e3 * float(np.median(times)), "chi2": float(np.sum(res.fun**2)), "nfev": int(res.nfev)})
    json.dump({"scipy": scipy.__version__, "numpy": np.__version__, "results": out}, sys.stdout)


if __name__ == "__main__":
    main()
