#!/usr/bin/env python3
"""Synthetic ellipsometric Psi/Delta from numpy (written independently of nkledger's TypeScript), for the
ellipsometry fit tests (test/stack/ellipsometry-fit.test.ts), the benchmark (scripts/bench-ellipsometry.ts) and
the INVENTED Marrowick Optics demo. Written with numpy 2.4.6 (the versions this was run with are stored in the
reference file). Run: python3 scripts/make-ellipsometry-reference.py

Physics, independent of src/stack:
- Psi, Delta of the front surface: scripts/stack_numpy.py (Born & Wolf §1.6 interface/propagation matrices,
  Fresnel coefficients and rho = rp/rs = tan(Psi) exp(i Delta) of R. M. A. Azzam and N. M. Bashara,
  Ellipsometry and Polarized Light, 1977; N = n - ik).
- Thermal SiO2: the three-term Sellmeier of I. H. Malitson, J. Opt. Soc. Am. 55, 1205 (1965):
  B = 0.6961663, 0.4079426, 0.8974794; resonance wavelengths 0.0684043, 0.1162414, 9.896161 um.
- Tauc-Lorentz: G. E. Jellison and F. A. Modine, Appl. Phys. Lett. 69, 371 (1996) (scripts/scipy_models.py).
- Bruggeman 50 % film/void roughness: the closed-form root of 2e^2 - b e - e1 e2 = 0, b = (2 - 3f) e1 + (3f - 1) e2
  (D. E. Aspnes, Thin Solid Films 89, 249 (1982)), root with Im e >= 0.
- The substrate is an INVENTED "Si-like" table (a Tauc-Lorentz curve with silicon-like numbers, not silicon's
  published optical constants), written as a file so that the fits read a tabulated substrate as a lab would.
Noise: Gaussian, seeded (numpy default_rng(18)), sigma given in the files' sigma columns.
"""
import json
import os
import sys

import numpy as np
import scipy

sys.path.insert(0, os.path.dirname(__file__))
from scipy_models import sellmeier_nk, tauc_lorentz_nk  # noqa: E402
from stack_numpy import psi_delta  # noqa: E402

ROOT = os.path.join(os.path.dirname(__file__), "..")
FIX = os.path.join(ROOT, "test", "fixtures", "ellipsometry")
DEMO = os.path.join(ROOT, "data", "marrowick")
os.makedirs(FIX, exist_ok=True)

MALITSON = {"B1": 0.6961663, "C1": 0.0684043**2, "B2": 0.4079426, "C2": 0.1162414**2, "B3": 0.8974794, "C3": 9.896161**2}
SI_LIKE = {"eps_inf": 1.0, "A": 140.0, "E0": 3.6, "C": 1.0, "Eg": 1.2}
SINX = {"eps_inf": 2.1, "A": 120.0, "E0": 8.5, "C": 3.2, "Eg": 3.4}
ANGLES = [65.0, 70.0, 75.0]
rng = np.random.default_rng(18)


def nk_of(N):
    """(n, k) with k >= 0 from a complex index n + ik (principal square root of eps)."""
    return {"n": np.real(N), "k": np.abs(np.imag(N))}


def bruggeman_half(N1, N2):
    e1, e2, f = N1**2, N2**2, 0.5
    b = (2 - 3 * f) * e1 + (3 * f - 1) * e2
    disc = np.sqrt(b * b + 8 * e1 * e2 + 0j)
    r0, r1 = (b + disc) / 4, (b - disc) / 4
    # the passive root (larger Im e); both real (lossless parts): the positive, larger one
    use0 = np.where(np.abs(r0.imag - r1.imag) > 1e-12 * np.abs(r0), r0.imag > r1.imag, r0.real > r1.real)
    e = np.where(use0, r0, r1)
    return np.sqrt(e)


def write_table(path, wl, N, comment):
    with open(path, "w") as f:
        f.write(f"# {comment}\n")
        f.write("wavelength_nm,n,k\n")
        for w, z in zip(wl, N):
            f.write(f"{w:.1f},{z.real:.6f},{abs(z.imag):.6f}\n")


def case_of(wl, layers, substrate):
    return {"wavelength_nm": wl, "ambient": {"n": np.ones_like(wl), "k": np.zeros_like(wl)}, "layers": layers, "substrate": substrate}


def simulate(wl, layers, substrate, sigma_psi, sigma_delta, noise=True):
    rows = []
    clean = []
    for a in ANGLES:
        psi, delta = psi_delta(case_of(wl, layers, substrate), a)
        clean.append({"angle_deg": a, "psi_deg": psi.tolist(), "delta_deg": delta.tolist()})
        npsi = psi + (rng.normal(0, sigma_psi, wl.size) if noise else 0)
        ndelta = delta + (rng.normal(0, sigma_delta, wl.size) if noise else 0)
        rows.append((a, npsi, ndelta))
    return rows, clean


def write_long(path, wl, rows, sigma_psi, sigma_delta, preamble, signed_delta=False):
    with open(path, "w") as f:
        for line in preamble:
            f.write(line + "\n")
        f.write("Wavelength (nm)\tAngle (deg)\tPsi (deg)\tDelta (deg)\tsigma_psi_deg\tsigma_delta_deg\n")
        for a, psi, delta in rows:
            for w, p, d in zip(wl, psi, delta):
                d = (d + 180) % 360 - 180 if signed_delta else d % 360
                f.write(f"{w:.1f}\t{a:g}\t{p:.4f}\t{d:.4f}\t{sigma_psi:g}\t{sigma_delta:g}\n")


def write_wide(path, wl, rows, preamble):
    with open(path, "w") as f:
        for line in preamble:
            f.write(line + "\n")
        f.write("wavelength_nm," + ",".join(f"psi_{a:g},delta_{a:g}" for a, _, _ in rows) + "\n")
        for i, w in enumerate(wl):
            f.write(f"{w:.2f}," + ",".join(f"{psi[i]:.4f},{delta[i] % 360:.4f}" for _, psi, delta in rows) + "\n")


# The tabulated Si-like substrate (tests and demo share it), 240-1100 nm every 2 nm.
sub_wl = np.arange(240.0, 1100.0 + 1e-9, 2.0)
write_table(os.path.join(FIX, "si-like-substrate.csv"), sub_wl, tauc_lorentz_nk(sub_wl, SI_LIKE),
            "INVENTED Si-like substrate (Tauc-Lorentz eps_inf=1 A=140 E0=3.6 C=1.0 Eg=1.2), not silicon's published data; scripts/make-ellipsometry-reference.py")
write_table(os.path.join(DEMO, "si-like-substrate.csv"), sub_wl, tauc_lorentz_nk(sub_wl, SI_LIKE),
            "INVENTED demo data of the Marrowick Optics lab: a Si-like substrate table (not silicon's published data); scripts/make-ellipsometry-reference.py")


def substrate_on(wl):
    # the table as the fits read it: rounded to 6 decimals, interpolated linearly (wl lies on the 2 nm grid or between)
    N = tauc_lorentz_nk(sub_wl, SI_LIKE)
    n = np.round(N.real, 6)
    k = np.round(np.abs(N.imag), 6)
    return {"n": np.interp(wl, sub_wl, n), "k": np.interp(wl, sub_wl, k)}


reference = {"versions": {"numpy": np.__version__, "scipy": scipy.__version__, "python": sys.version.split()[0]}, "cases": {}}

# 1. Thermal SiO2 (Malitson) 102.3 nm on the Si-like table, 3 angles, 300-1000 nm every 5 nm, with noise.
wl = np.arange(300.0, 1000.0 + 1e-9, 5.0)
film = nk_of(sellmeier_nk(wl, MALITSON, 3))
layers = [dict(film, thickness_nm=102.3)]
rows, clean = simulate(wl, layers, substrate_on(wl), 0.01, 0.03)
write_long(os.path.join(FIX, "sio2-malitson.psi-delta.txt"), wl, rows, 0.01, 0.03,
           ["# INVENTED synthetic data: scripts/make-ellipsometry-reference.py (numpy), Malitson 1965 SiO2 102.3 nm on an invented Si-like table",
            "Sample: SiO2 on Si-like (synthetic)", "Angles: 65 70 75"], signed_delta=True)
n6328 = float(np.real(sellmeier_nk(np.array([632.8]), MALITSON, 3))[0])
reference["cases"]["sio2-malitson"] = {"thickness_nm": 102.3, "n_632_8": n6328, "sigma_psi_deg": 0.01, "sigma_delta_deg": 0.03,
                                       "wavelength_nm": wl.tolist(), "clean": clean}

# 2. A 4 nm SiO2 film: thickness and index strongly correlated (common practice).
rows, clean = simulate(wl, [dict(film, thickness_nm=4.0)], substrate_on(wl), 0.01, 0.03)
write_long(os.path.join(FIX, "sio2-thin.psi-delta.txt"), wl, rows, 0.01, 0.03,
           ["# INVENTED synthetic data: scripts/make-ellipsometry-reference.py, 4 nm Malitson SiO2 on the invented Si-like table"])
reference["cases"]["sio2-thin"] = {"thickness_nm": 4.0, "wavelength_nm": wl.tolist(), "clean": clean}

# 3. Tauc-Lorentz SiNx-like film 85 nm under 3 nm Bruggeman 50 % film/void roughness, 500 wavelengths x 3 angles
#    (the benchmark case of the issue), wide layout, no sigma columns.
wl3 = np.linspace(300.0, 1000.0, 500)
tl = tauc_lorentz_nk(wl3, SINX)
rough = bruggeman_half(tl, np.ones_like(tl))
layers3 = [dict(nk_of(rough), thickness_nm=3.0), dict(nk_of(tl), thickness_nm=85.0)]
rows3, clean3 = simulate(wl3, layers3, substrate_on(wl3), 0.02, 0.05)
write_wide(os.path.join(FIX, "sinx-rough.psi-delta.csv"), wl3, rows3,
           ["# INVENTED synthetic data: scripts/make-ellipsometry-reference.py, Tauc-Lorentz film 85 nm + 3 nm Bruggeman roughness on the invented Si-like table"])
reference["cases"]["sinx-rough"] = {"parameters": {**SINX, "thickness_nm": 85.0, "roughness_nm": 3.0}, "sigma_psi_deg": 0.02, "sigma_delta_deg": 0.05,
                                    "wavelength_nm": wl3.tolist(), "clean": clean3}

# 4. The demo: the same kind of film as the Marrowick lab would measure it (different thickness), long layout.
wl4 = np.arange(350.0, 1000.0 + 1e-9, 5.0)
tl4 = tauc_lorentz_nk(wl4, SINX)
rows4, _ = simulate(wl4, [dict(nk_of(bruggeman_half(tl4, np.ones_like(tl4))), thickness_nm=2.5), dict(nk_of(tl4), thickness_nm=142.0)],
                    substrate_on(wl4), 0.02, 0.05)
write_long(os.path.join(DEMO, "sinx-on-si.psi-delta.txt"), wl4, rows4, 0.02, 0.05,
           ["# INVENTED demo data of the Marrowick Optics lab (synthetic: scripts/make-ellipsometry-reference.py), not a measurement",
            "Marrowick Optics MO-SE 640 spectroscopic ellipsometer - Psi/Delta export", "Sample: SiNx PECVD recipe A on Si-like wafer, run 17",
            "Operator: R. Okafor"])

with open(os.path.join(ROOT, "test", "reference", "ellipsometry-numpy.json"), "w") as f:
    json.dump(reference, f)
print("wrote test/fixtures/ellipsometry/*, data/marrowick/si-like-substrate.csv, data/marrowick/sinx-on-si.psi-delta.txt, test/reference/ellipsometry-numpy.json")
