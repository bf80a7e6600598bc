#!/usr/bin/env python3
"""Reference effective-medium permittivities and the R, Psi, Delta of a stack with mixed layers, from numpy
(written independently of nkledger's src/stack/effective-medium.ts), for test/stack/effective-medium.test.ts.

Formulas: D. E. Aspnes, "Optical properties of thin films", Thin Solid Films 89, 249 (1982), spherical
inclusions in three dimensions.
- Bruggeman: the roots of (1 - f)(e1 - e)(e2 + 2e) + f(e2 - e)(e1 + 2e) = 0, multiplied out here by numpy's
  polynomial arithmetic and solved with numpy.roots; the physical root has Im e >= 0 (for lossless inputs,
  the positive one).
- Maxwell Garnett: (e - eh)/(e + 2eh) = f (ei - eh)/(ei + 2eh), solved for e as eh (1 + 2a)/(1 - a).
Permittivities use e = (n + ik)^2, k >= 0; the stack (scripts/stack_numpy.py) then takes N = n - ik.
All n, k are invented test inputs. Writes test/reference/ema-numpy.json. Run: python3 scripts/make-ema-reference.py
"""
import json
import os
import sys

import numpy as np
from numpy.polynomial import polynomial as P

sys.path.insert(0, os.path.dirname(__file__))
from stack_numpy import coherent  # noqa: E402


def eps(n, k):
    return complex(n, k) ** 2


def bruggeman(e1, e2, f):
    # polynomials in e, lowest power first
    poly = (1 - f) * P.polymul([e1, -1], [e2, 2]) + f * P.polymul([e2, -1], [e1, 2])
    roots = np.roots(poly[::-1])
    if np.all(np.abs(roots.imag) <= 1e-12 * np.abs(roots)):
        return complex(roots[np.argmax(roots.real)].real, 0.0)
    return complex(roots[np.argmax(roots.imag)])


def maxwell_garnett(eh, ei, f):
    a = f * (ei - eh) / (ei + 2 * eh)
    return eh * (1 + 2 * a) / (1 - a)


def nk(e):
    r = np.sqrt(complex(e))  # principal branch: Re >= 0, and Im >= 0 when Im e >= 0
    return float(r.real), float(r.imag)


PAIRS = [
    ("glass and void", (1.5, 0.0), (1.0, 0.0)),
    ("a-Si-like and void", (4.2, 0.6), (1.0, 0.0)),
    ("metal-like in glass", (1.5, 0.0), (0.15, 3.5)),
    ("two absorbers", (2.0, 0.3), (3.0, 1.5)),
]
FRACTIONS = [0.0, 0.1, 0.3, 0.5, 0.7, 1.0]
mixing = []
for name, a, b in PAIRS:
    e1, e2 = eps(*a), eps(*b)
    for f in FRACTIONS:
        br, mg = bruggeman(e1, e2, f), maxwell_garnett(e1, e2, f)
        mixing.append({"name": name, "first": list(a), "second": list(b), "fraction": f,
                       "bruggeman": [br.real, br.imag], "maxwell_garnett": [mg.real, mg.imag]})

# A stack with mixed layers: air / Bruggeman(a-Si-like, void, 0.3) 40 nm / MG(silica host, metal-like, 0.1) 60 nm / Si-like.
wl = np.arange(400.0, 800.0 + 1e-9, 50.0)
layer1 = nk(bruggeman(eps(3.9, 0.02), eps(1.0, 0.0), 0.3))
layer2 = nk(maxwell_garnett(eps(1.46, 0.0), eps(0.15, 3.5), 0.1))
N = [np.full(wl.shape, 1.0 + 0j), np.full(wl.shape, complex(layer1[0], -layer1[1])),
     np.full(wl.shape, complex(layer2[0], -layer2[1])), np.full(wl.shape, complex(3.88, -0.02))]
results = []
for theta in (0.0, 70.0):
    rs = coherent(N, [40.0, 60.0], wl, theta, "s")[0]
    rp = coherent(N, [40.0, 60.0], wl, theta, "p")[0]
    rho = rp / rs
    results.append({"angle_deg": theta, "Rs": list(np.abs(rs) ** 2), "Rp": list(np.abs(rp) ** 2),
                    "psi_deg": list(np.degrees(np.arctan(np.abs(rho)))),
                    "delta_deg": list(np.mod(np.degrees(np.angle(rho)), 360.0))})

out = {
    "source": f"scripts/make-ema-reference.py, numpy {np.__version__} (Aspnes, Thin Solid Films 89, 249 (1982))",
    "mixing": mixing,
    "stack": {"wavelength_nm": list(wl), "layer_nk": [list(layer1), list(layer2)], "results": results},
}
path = os.path.join(os.path.dirname(__file__), "..", "test", "reference", "ema-numpy.json")
with open(path, "w") as fh:
    json.dump(out, fh, indent=1)
    fh.write("\n")
print("wrote", os.path.normpath(path))
