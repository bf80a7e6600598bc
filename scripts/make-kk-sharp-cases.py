#!/usr/bin/env python3
"""Sharp-feature cases for the Kramers-Kronig check: exact Lorentz sums (an exact KK pair, textbook, e.g.
H. Fujiwara, Spectroscopic Ellipsometry, Wiley 2007, ch. 5) with narrow peaks, and three corrupted copies
that must stay inconsistent.

Window 1-5 eV sampled every 0.006 eV (667 rows), so a peak of FWHM Gamma = 0.03 eV has 5 samples per FWHM.
Consistent cases: Gamma = 0.2, 0.1, 0.05, 0.03 eV (two sharp peaks at 2.5 and 4.2 eV, peak eps2 about 3 and
4.5, plus a broad far-UV oscillator). Inconsistent cases, from Gamma = 0.03: n + 0.01 Gaussian bump
(standard deviation 0.15 eV at 3.4 eV); n + 0.01 step above 3.4 eV; k x 1.3. Noise-free.

Run: python3 scripts/make-kk-sharp-cases.py   (numpy 2.4.6, scipy 1.17.1) -> test/fixtures/kk/sharp-lorentz.json
"""
import json
import os

import numpy as np
import scipy
from scipy.special import erf  # noqa: F401  (scipy is the named reference library of the suite)

HC_EV_NM = 1239.841984  # CODATA 2018
ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..")


def lorentz_eps(e, eps_inf, oscillators):
    eps = np.full(e.shape, eps_inf, dtype=complex)
    for amp, e0, gamma in oscillators:
        eps += amp / (e0**2 - e**2 - 1j * gamma * e)
    return eps


def oscillators(gamma):
    # amplitude 9*Gamma*E0/3 keeps the peak eps2 = A/(Gamma*E0) the same for every Gamma
    return [(3.0 * gamma * 2.5, 2.5, gamma), (4.5 * gamma * 4.2, 4.2, gamma), (40.0, 8.0, 1.5)]


def main():
    e = np.round(np.arange(5.0, 1.0 - 1e-9, -0.006), 6)
    nm = HC_EV_NM / e
    cases = {}
    for gamma in (0.2, 0.1, 0.05, 0.03):
        root = np.sqrt(lorentz_eps(e, 1.5, oscillators(gamma)))
        cases[f"gamma-{gamma}"] = {"expect": "consistent", "gamma_ev": gamma, "n": root.real.tolist(), "k": root.imag.tolist()}
    base = np.sqrt(lorentz_eps(e, 1.5, oscillators(0.03)))
    bump = base.real + 0.01 * np.exp(-0.5 * ((e - 3.4) / 0.15) ** 2)
    step = base.real + np.where(e > 3.4, 0.01, 0.0)
    cases["bump-n"] = {"expect": "inconsistent", "gamma_ev": 0.03, "n": bump.tolist(), "k": base.imag.tolist()}
    cases["step-n"] = {"expect": "inconsistent", "gamma_ev": 0.03, "n": step.tolist(), "k": base.imag.tolist()}
    cases["k-times-1.3"] = {"expect": "inconsistent", "gamma_ev": 0.03, "n": base.real.tolist(), "k": (1.3 * base.imag).tolist()}
    doc = {
        "generator": f"scripts/make-kk-sharp-cases.py (numpy {np.__version__}, scipy {scipy.__version__})",
        "eps_inf": 1.5,
        "oscillators": "A/(E0^2 - E^2 - i*Gamma*E): (7.5*Gamma, 2.5, Gamma), (18.9*Gamma, 4.2, Gamma), (40, 8, 1.5)",
        "wavelength_nm": nm.tolist(),
        "cases": cases,
    }
    with open(os.path.join(ROOT, "test", "fixtures", "kk", "sharp-lorentz.json"), "w") as fh:
        json.dump(doc, fh)
        fh.write("\n")
    print(len(e), "rows,", ", ".join(cases))


if __name__ == "__main__":
    main()
