#!/usr/bin/env python3
"""The scipy side of scripts/bench-fit.ts, run as a server so the two sides can be timed in alternating
rounds on a shared machine. Protocol (one JSON document per line): the first line on stdin is the list
of cases (data, sigmas, start, fixed values); the reply names the scipy/numpy versions and, per case, the
final chi^2, nfev (scipy's count, which for method='lm' excludes the finite-difference Jacobian calls) and
the total number of residual-function calls (counted in an untimed fit). Then each line {"case": i,
"repeats": r} is answered with {"ms": [...]}: the time of each least_squares(method='lm') call at its
default tolerances and 2-point Jacobian, from the same start, nothing else inside the timer. Not run on its own."""
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


def problem(c):
    nm = np.array(c["wavelength_nm"])
    names = list(c["start"])
    sigma_k = np.array(c["sigma_k"]) if c["fit_k"] else 1.0
    f_full = residuals(MODELS[c["kind"]], names, c["fixed"], nm, np.array(c["n"]), np.array(c["k"]), np.array(c["sigma_n"]), sigma_k)
    f = f_full if c["fit_k"] else (lambda x, g=f_full, m=nm.size: g(x)[:m])
    return f, [c["start"][q] for q in names]


def main():
    cases = json.loads(sys.stdin.readline())
    problems = [problem(c) for c in cases]
    summary = []
    for f, x0 in problems:
        calls = [0]

        def counted(x, f=f, calls=calls):
            calls[0] += 1
            return f(x)

        res = least_squares(counted, x0, method="lm")
        summary.append({"chi2": float(np.sum(res.fun**2)), "nfev": int(res.nfev), "calls": calls[0]})
    print(json.dumps({"scipy": scipy.__version__, "numpy": np.__version__, "results": summary}), flush=True)
    for line in sys.stdin:
        request = json.loads(line)
        f, x0 = problems[request["case"]]
        times = []
        for _ in range(request["repeats"]):
            t0 = time.perf_counter()
            least_squares(f, x0, method="lm")
            times.append(1e3 * (time.perf_counter() - t0))
        print(json.dumps({"ms": times}), flush=True)


if __name__ == "__main__":
    main()
