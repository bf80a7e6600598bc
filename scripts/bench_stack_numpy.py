#!/usr/bin/env python3
"""numpy side of scripts/bench-stack.ts: reads one JSON case on the first line of stdin (wavelengths, media,
thicknesses, angle), then answers each line "N" with the median wall time and the mean CPU time in ms of N runs of Rs, Rp, Ts, Tp
(s and p through scripts/stack_numpy.py, vectorised over wavelengths), and a checksum of Rs + Rp."""
import json
import os
import sys
import time

import numpy as np

sys.path.insert(0, os.path.dirname(__file__))
from stack_numpy import coherent  # noqa: E402

case = json.loads(sys.stdin.readline())
wl = np.asarray(case["wavelength_nm"], dtype=float)
N = [np.asarray(m["n"]) - 1j * np.asarray(m["k"]) for m in [case["ambient"]] + case["layers"] + [case["substrate"]]]
d = [m["thickness_nm"] for m in case["layers"]]
theta = case["angle_deg"]


def once():
    rs, _, Ts, _ = coherent(N, d, wl, theta, "s")
    rp, _, Tp, _ = coherent(N, d, wl, theta, "p")
    return np.abs(rs) ** 2, np.abs(rp) ** 2, Ts, Tp


print(json.dumps({"numpy": np.__version__}), flush=True)
for line in sys.stdin:
    n = int(line)
    times = []
    cpu0 = time.process_time()
    for _ in range(n):
        t0 = time.perf_counter()
        Rs, Rp, Ts, Tp = once()
        times.append((time.perf_counter() - t0) * 1000)
    cpu = (time.process_time() - cpu0) * 1000 / n
    print(json.dumps({"ms": float(np.median(times)), "cpu": cpu, "check": float(np.sum(Rs) + np.sum(Rp))}), flush=True)
