#!/usr/bin/env python3
"""Reference values for the Tauc-Lorentz closed-form eps1 (Jellison & Modine 1996).

eps1(E) - eps_inf = (2/pi) P-int_Eg^inf xi*eps2(xi)/(xi^2 - E^2) dxi
                  = (1/pi) [ P-int eps2(xi)/(xi - E) dxi + int eps2(xi)/(xi + E) dxi ]
(partial fractions xi/(xi^2 - E^2) = 1/2 [1/(xi - E) + 1/(xi + E)]).
For E > Eg the principal value is taken by scipy.integrate.quad(weight='cauchy') (QUADPACK QAWC) on
[Eg, U] plus an ordinary integral over [U, inf); for E < Eg the integrand is regular and plain quad is used.
Writes test/reference/tauc-lorentz-kk.json. Run: python3 scripts/make-tauc-lorentz-reference.py
"""
import json
import math
import os

import numpy as np
import scipy
from scipy.integrate import quad

CASES = [
    # the parameter set of docs/references.md (amorphous-silicon-like)
    {"A": 122.0, "E0": 3.45, "C": 2.54, "Eg": 1.20, "eps_inf": 1.15},
    # a wide-gap dielectric with a narrower oscillator (exercises gamma^2 < Eg^2 branches)
    {"A": 60.0, "E0": 5.2, "C": 1.1, "Eg": 4.1, "eps_inf": 2.0},
]
OPTS = dict(epsabs=1e-14, epsrel=1e-13, limit=1000)


def eps2(xi, p):
    if xi <= p["Eg"]:
        return 0.0
    return p["A"] * p["E0"] * p["C"] * (xi - p["Eg"]) ** 2 / (((xi**2 - p["E0"] ** 2) ** 2 + p["C"] ** 2 * xi**2) * xi)


def eps1(e, p):
    eg = p["Eg"]
    upper = max(20.0 * p["E0"], 2.0 * e + 20.0)
    f = lambda xi: eps2(xi, p)
    if e > eg:
        pv, _ = quad(f, eg, upper, weight="cauchy", wvar=e, **OPTS)
        head, _ = quad(lambda xi: f(xi) / (xi + e), eg, upper, points=[p["E0"]], **OPTS)
    else:
        pv, _ = quad(lambda xi: f(xi) / (xi - e), eg, upper, points=[p["E0"]], **OPTS)
        head, _ = quad(lambda xi: f(xi) / (xi + e), eg, upper, points=[p["E0"]], **OPTS)
    tail, _ = quad(lambda xi: f(xi) * 2 * xi / (xi**2 - e**2), upper, np.inf, **OPTS)
    return p["eps_inf"] + (pv + head + tail) / math.pi


def main():
    cases = []
    for p in CASES:
        below = np.linspace(0.3, p["Eg"] - 0.05, 20)
        above = np.linspace(p["Eg"] + 0.05, p["E0"] + 4.0, 30)
        energies = [float(e) for e in np.concatenate([below, above])]
        cases.append({
            "parameters": p,
            "energy_ev": energies,
            "eps1": [eps1(e, p) for e in energies],
            "eps2": [eps2(e, p) for e in energies],
        })
    out = {
        "source": "principal-value Kramers-Kronig integral of the Jellison-Modine 1996 eps2, "
                  "scipy.integrate.quad (weight='cauchy' above Eg, plain quad below), "
                  f"scipy {scipy.__version__}, numpy {np.__version__}",
        "script": "scripts/make-tauc-lorentz-reference.py",
        "cases": cases,
    }
    path = os.path.join(os.path.dirname(__file__), "..", "test", "reference", "tauc-lorentz-kk.json")
    with open(path, "w") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
