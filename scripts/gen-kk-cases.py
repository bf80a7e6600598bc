#!/usr/bin/env python3
"""Synthetic n,k tables for the Kramers-Kronig check tests (issue 4), and a reference transform.

Run:  python3 scripts/gen-kk-cases.py        (numpy 2.4.6, scipy 1.17.1; seeded, deterministic)

Writes test/fixtures/kk/<case>.json (wavelength_nm, n, k + how it was made) and .csv copies for the
CLI tests, and test/reference/kk-piecewise-linear-scipy.json: eps1 - eps_inf of a piecewise-linear
eps2 by scipy's principal-value quadrature, to cross-check nkledger's analytic transform.

Every eps1 that is not a closed-form Lorentz sum comes from scipy.integrate.quad (weight='cauchy'),
so the fixtures do not depend on nkledger's own transform.
"""
import json
import os

import numpy as np
import scipy
from scipy.integrate import quad

HC_EV_NM = 1239.841984  # CODATA 2018
ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..")
FIXTURES = os.path.join(ROOT, "test", "fixtures", "kk")
REFERENCE = os.path.join(ROOT, "test", "reference")
GENERATOR = f"scripts/gen-kk-cases.py (numpy {np.__version__}, scipy {scipy.__version__})"


def nk_from_eps(eps):
    """N = sqrt(eps) on the principal branch, k >= 0."""
    root = np.sqrt(eps.astype(complex))
    return root.real, root.imag


def lorentz_eps(energy_ev, eps_inf, oscillators):
    """eps = eps_inf + sum A / (E0^2 - E^2 - i*Gamma*E): an exact Kramers-Kronig pair (textbook, e.g. Fujiwara 2007 ch. 5)."""
    eps = np.full(energy_ev.shape, eps_inf, dtype=complex)
    for amp, e0, gamma in oscillators:
        eps += amp / (e0**2 - energy_ev**2 - 1j * gamma * energy_ev)
    return eps


def tauc_lorentz_eps2(e, amp, e0, c, eg):
    """Jellison & Modine, Appl. Phys. Lett. 69, 371 (1996): eps2 for E > Eg, else 0."""
    if e <= eg:
        return 0.0
    return amp * e0 * c * (e - eg) ** 2 / (((e * e - e0 * e0) ** 2 + c * c * e * e) * e)


def kk_eps1_minus_inf(eps2, energy_ev, lower, upper):
    """(2/pi) P-int xi eps2(xi) / (xi^2 - E^2) dxi = (1/pi)[P-int eps2/(xi-E) + int eps2/(xi+E)] over [lower, upper]."""
    if lower < energy_ev < upper:
        principal = quad(eps2, lower, upper, weight="cauchy", wvar=energy_ev, limit=400, epsabs=1e-13, epsrel=1e-12)[0]
    else:
        principal = quad(lambda x: eps2(x) / (x - energy_ev), lower, upper, limit=400, epsabs=1e-13, epsrel=1e-12)[0]
    regular = quad(lambda x: eps2(x) / (x + energy_ev), lower, upper, limit=400, epsabs=1e-13, epsrel=1e-12)[0]
    return (principal + regular) / np.pi


def tauc_lorentz_eps(energy_ev, eps_inf, amp, e0, c, eg):
    eps2_of = lambda x: tauc_lorentz_eps2(x, amp, e0, c, eg)
    # TL eps2 falls as E^-3, so the tail beyond 2000 eV changes eps1 by < 1e-9; split at 50 eV for accuracy.
    eps1 = []
    for e in energy_ev:
        total = 0.0
        for lo, hi in ((eg, 50.0), (50.0, 2000.0)):
            total += kk_eps1_minus_inf(eps2_of, e, lo, hi)
        eps1.append(eps_inf + total)
    eps2 = np.array([eps2_of(e) for e in energy_ev])
    return np.array(eps1) + 1j * eps2


def write_case(name, wavelength_nm, n, k, description, parameters):
    order = np.argsort(wavelength_nm)
    wl, n, k = wavelength_nm[order], n[order], k[order]
    doc = {
        "case": name,
        "description": description,
        "parameters": parameters,
        "generator": GENERATOR,
        "wavelength_nm": [round(float(x), 6) for x in wl],
        "n": [float(f"{x:.10g}") for x in n],
        "k": [float(f"{x:.10g}") for x in k],
    }
    with open(os.path.join(FIXTURES, f"{name}.json"), "w") as fh:
        json.dump(doc, fh, indent=1)
        fh.write("\n")
    with open(os.path.join(FIXTURES, f"{name}.csv"), "w") as fh:
        fh.write("wavelength_nm,n,k\n")
        for a, b, c in zip(doc["wavelength_nm"], doc["n"], doc["k"]):
            fh.write(f"{a},{b},{c}\n")


def lorentz_cases():
    wl = np.arange(300.0, 1200.0 + 1e-9, 3.0)
    e = HC_EV_NM / wl
    osc = [(6.0, 2.6, 0.5), (60.0, 7.0, 1.2)]  # (A eV^2, E0 eV, Gamma eV): one inside the window (477 nm), one above (177 nm)
    n, k = nk_from_eps(lorentz_eps(e, 1.2, osc))
    params = {"eps_inf": 1.2, "oscillators_A_E0_Gamma": osc, "step_nm": 3}
    write_case("lorentz-pair", wl, n, k, "Two Lorentz oscillators (exact KK pair), one inside and one above 300-1200 nm", params)
    bump_nm, bump_sigma_nm = 750.0, 15.0
    bump = 0.01 * np.exp(-((wl - bump_nm) ** 2) / (2 * bump_sigma_nm**2))
    write_case(
        "lorentz-bump",
        wl,
        n + bump,
        k,
        "lorentz-pair with a Gaussian bump +0.01 added to n (centre 750 nm, sigma 15 nm)",
        {**params, "bump_center_nm": bump_nm, "bump_sigma_nm": bump_sigma_nm, "bump_height": 0.01},
    )


def tauc_lorentz_cases():
    e = np.arange(1.5, 5.5 + 1e-9, 0.01)
    params = {"eps_inf": 1.1, "A": 150.0, "E0": 4.6, "C": 2.2, "Eg": 2.0, "step_eV": 0.01}
    eps = tauc_lorentz_eps(e, params["eps_inf"], params["A"], params["E0"], params["C"], params["Eg"])
    n, k = nk_from_eps(eps)
    wl = HC_EV_NM / e
    desc = "Tauc-Lorentz film sampled 1.5-5.5 eV, eps2 still large at the top edge; eps1 by scipy PV quadrature"
    write_case("tauc-lorentz", wl, n, k, desc, params)
    rng = np.random.default_rng(20240404)
    n_noisy = n * (1 + 0.002 * rng.standard_normal(n.shape))
    k_noisy = k * (1 + 0.002 * rng.standard_normal(k.shape))
    write_case("tauc-lorentz-noisy", wl, n_noisy, k_noisy, desc + "; 0.2% relative Gaussian noise on n and k",
               {**params, "noise_relative": 0.002, "seed": 20240404})


def cauchy_cases():
    wl = np.arange(300.0, 1200.0 + 1e-9, 3.0)
    um = wl / 1000.0
    n = 1.60 + 0.008 / um**2 + 0.0002 / um**4  # Cauchy, lambda in um
    write_case("transparent", wl, n, np.zeros_like(n), "Cauchy n with k = 0 everywhere (300-1200 nm)",
               {"cauchy_A": 1.60, "cauchy_B_um2": 0.008, "cauchy_C_um4": 0.0002})
    e = HC_EV_NM / wl
    k = 0.05 * np.exp((e - 3.6) / 0.2)  # Urbach tail: k = Ak exp((E - Eb)/Eu)
    write_case("cauchy-urbach", wl, n, k, "Cauchy n with a strong Urbach absorption tail in k (not a KK pair)",
               {"cauchy_A": 1.60, "cauchy_B_um2": 0.008, "cauchy_C_um4": 0.0002, "urbach_Ak": 0.05, "urbach_Eb_eV": 3.6,
                "urbach_Eu_eV": 0.2})


def piecewise_linear_reference():
    """eps1 - eps_inf of a piecewise-linear eps2 (zero outside its nodes, one jump at each end case too)."""
    cases = []
    shapes = {
        "triangle": ([2.0, 3.0, 4.5], [0.0, 1.0, 0.0]),
        "ragged": ([0.5, 1.2, 2.0, 2.4, 3.1, 4.0, 6.5], [0.0, 0.8, 3.2, 2.9, 5.0, 1.1, 0.0]),
        "truncated": ([1.0, 2.0, 3.0], [0.7, 2.0, 1.5]),  # nonzero at both ends: jumps to zero outside
    }
    for name, (nodes, values) in shapes.items():
        eps2 = lambda x, nodes=nodes, values=values: float(np.interp(x, nodes, values, left=0.0, right=0.0))
        energies = [0.3, 0.9, 1.55, 2.2, 2.7, 3.33, 3.9, 5.0, 7.2, 12.0]
        eps1 = [kk_eps1_minus_inf_split(eps2, e, nodes) for e in energies]
        cases.append({"name": name, "nodes_eV": nodes, "eps2": values, "energy_eV": energies, "eps1_minus_eps_inf": eps1})
    doc = {
        "what": "(2/pi) P-int_0^inf xi eps2(xi)/(xi^2 - E^2) dxi for piecewise-linear eps2 (linear between nodes, 0 outside)",
        "generator": GENERATOR + ", scipy.integrate.quad weight='cauchy' per segment",
        "cases": cases,
    }
    with open(os.path.join(REFERENCE, "kk-piecewise-linear-scipy.json"), "w") as fh:
        json.dump(doc, fh, indent=1)
        fh.write("\n")


def kk_eps1_minus_inf_split(eps2, energy_ev, nodes):
    """Integrate segment by segment so quad never straddles a kink; the segment holding E gets the Cauchy weight."""
    total = 0.0
    for lo, hi in zip(nodes[:-1], nodes[1:]):
        total += kk_eps1_minus_inf(eps2, energy_ev, lo, hi)
    return total


def nnls_reference():
    """Seeded random non-negative least-squares problems solved by scipy.optimize.nnls (reference library)."""
    from scipy.optimize import nnls

    rng = np.random.default_rng(7)
    problems = []
    for rows, cols in ((12, 5), (30, 10), (8, 8)):
        a = rng.standard_normal((rows, cols))
        b = rng.standard_normal(rows)
        x, _ = nnls(a, b)
        problems.append({"A": a.tolist(), "b": b.tolist(), "x": x.tolist()})
    doc = {"what": "argmin ||Ax - b|| subject to x >= 0", "generator": GENERATOR + ", scipy.optimize.nnls", "problems": problems}
    with open(os.path.join(REFERENCE, "kk-nnls-scipy.json"), "w") as fh:
        json.dump(doc, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    os.makedirs(FIXTURES, exist_ok=True)
    os.makedirs(REFERENCE, exist_ok=True)
    lorentz_cases()
    tauc_lorentz_cases()
    cauchy_cases()
    piecewise_linear_reference()
    nnls_reference()
    print("wrote", FIXTURES, "and", REFERENCE)
