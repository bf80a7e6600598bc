#!/usr/bin/env python3
"""Reference R, T, Psi, Delta of thin-film stacks from an independent numpy implementation
(scripts/stack_numpy.py: interface/propagation matrices of Azzam & Bashara Fresnel coefficients,
Katsidis & Siapkas intensity matrices for the incoherent substrate), for test/stack/numpy-reference.test.ts.

Cases: a dispersive 7-layer dielectric stack; an absorbing stack (metal-like and a-Si-like layers) on an
absorbing substrate; a coated, weakly absorbing 1 mm substrate summed incoherently with its back surface;
frustrated total internal reflection across an air gap. The n,k values are invented test inputs.
Writes test/reference/stack-numpy.json. Run: python3 scripts/make-stack-reference.py
"""
import json
import os
import sys

import numpy as np

sys.path.insert(0, os.path.dirname(__file__))
from stack_numpy import psi_delta, stack  # noqa: E402

wl = np.arange(400.0, 800.0 + 1e-9, 25.0)
um2 = (wl / 1000.0) ** 2


def const(n, k=0.0):
    return {"n": [float(n)] * len(wl), "k": [float(k)] * len(wl)}


def arrays(n, k):
    return {"n": [float(x) for x in n], "k": [float(x) for x in k]}


high = arrays(2.25 + 0.02 / um2, 0 * wl)          # Cauchy-like high index, lossless
low = arrays(1.45 + 0.0035 / um2, 0 * wl)         # Cauchy-like low index, lossless
glass = arrays(1.50 + 0.0045 / um2, 0 * wl)
metal = arrays(0.05 + 0.12 * um2, 2.0 + 5.0 * (wl / 1000.0))   # metal-like: small n, large k
asi = arrays(4.2 + 0.3 * (0.4 / (wl / 1000.0)) ** 2, 1.2 * np.exp(-(wl - 400.0) / 120.0))
si_like = arrays(3.8 + 0.25 / um2 * 0.1, 0.01 + 0.3 * np.exp(-(wl - 400.0) / 60.0))

CASES = [
    {
        "name": "dielectric 7-layer HL stack on glass",
        "ambient": const(1.0),
        "layers": [dict(m, thickness_nm=t) for m, t in
                   [(high, 60.0), (low, 95.0), (high, 61.0), (low, 94.0), (high, 59.0), (low, 96.0), (high, 58.0)]],
        "substrate": glass, "substrate_mm": None, "angles_deg": [0.0, 35.0, 65.0],
    },
    {
        "name": "absorbing stack on an absorbing substrate",
        "ambient": const(1.0),
        "layers": [dict(low, thickness_nm=80.0), dict(metal, thickness_nm=12.0), dict(asi, thickness_nm=25.0), dict(high, thickness_nm=40.0)],
        "substrate": si_like, "substrate_mm": None, "angles_deg": [0.0, 45.0, 70.0],
    },
    {
        "name": "coated weakly absorbing 1 mm substrate, incoherent with its back surface",
        "ambient": const(1.0),
        "layers": [dict(high, thickness_nm=30.0), dict(asi, thickness_nm=5.0), dict(low, thickness_nm=110.0)],
        "substrate": arrays(glass["n"], 2e-6 * (500.0 / wl)), "substrate_mm": 1.0, "angles_deg": [0.0, 60.0],
    },
    {
        "name": "frustrated total internal reflection across a 200 nm air gap",
        "ambient": const(1.5),
        "layers": [dict(const(1.0), thickness_nm=200.0)],
        "substrate": const(1.5), "substrate_mm": None, "angles_deg": [50.0],
    },
]

out = {
    "source": f"independent numpy implementation scripts/stack_numpy.py, numpy {np.__version__}",
    "script": "scripts/make-stack-reference.py",
    "convention": "N = n - ik; Psi, Delta of Azzam & Bashara, Delta in [0, 360)",
    "wavelength_nm": wl.tolist(),
    "cases": [],
}
for case in CASES:
    case["wavelength_nm"] = wl
    results = []
    for theta in case["angles_deg"]:
        Rs, Ts, _ = stack(case, theta, "s")
        Rp, Tp, _ = stack(case, theta, "p")
        psi, delta = psi_delta(case, theta)
        results.append({"angle_deg": theta, "Rs": Rs.tolist(), "Rp": Rp.tolist(), "Ts": Ts.tolist(), "Tp": Tp.tolist(),
                        "psi_deg": psi.tolist(), "delta_deg": delta.tolist()})
    out["cases"].append({
        "name": case["name"], "ambient": case["ambient"], "layers": case["layers"], "substrate": case["substrate"],
        "substrate_mm": case["substrate_mm"], "results": results,
    })

path = os.path.join(os.path.dirname(__file__), "..", "test", "reference", "stack-numpy.json")
with open(path, "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
print(f"wrote {os.path.normpath(path)}")
