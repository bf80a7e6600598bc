"""A numpy implementation of thin-film stack optics, written independently of nkledger's engine, for reference
fixtures and the side-by-side benchmark.

Method: interface and propagation matrices of amplitude coefficients (Born & Wolf, Principles of Optics §1.6;
the formulation of S. J. Byrnes, "Multilayer optical calculations", arXiv:1603.02720, conjugated to the
N = n - ik convention), vectorised over wavelengths. Fresnel coefficients of Azzam & Bashara (Ellipsometry
and Polarized Light, 1977): with q = N cos(theta),
  rs = (q_j - q_k)/(q_j + q_k),                ts = 2 q_j/(q_j + q_k),
  rp = (N_k^2 q_j - N_j^2 q_k)/(N_k^2 q_j + N_j^2 q_k),  tp = 2 N_j N_k q_j/(N_k^2 q_j + N_j^2 q_k),
rho = rp/rs = tan(Psi) exp(i Delta). Power: Ts = Re(q_s)/Re(q_0)|ts|^2, Tp = Re(N_s^* cos th_s)/Re(N_0^* cos th_0)|tp|^2.
Incoherent thick substrate: the intensity-matrix method of C. C. Katsidis and D. I. Siapkas, Appl. Opt. 41,
3978 (2002): K = (1/T)[[1, -R'], [R, T T' - R R']] per coherent block, diag(1/tau, tau) for the substrate.
"""
import numpy as np


def branch(q):
    """sqrt on the physical branch for N = n - ik: Im q <= 0, and Re q >= 0 when Im q = 0."""
    q = np.sqrt(q.astype(complex))
    flip = (q.imag > 0) | ((q.imag == 0) & (q.real < 0))
    return np.where(flip, -q, q)


def coherent(N, d_nm, wl, theta0_deg, pol):
    """N: list of complex arrays (ambient, layers..., exit), d_nm: thicknesses of the layers.
    Returns amplitude r, t, power T and the q = N cos(theta) of every medium for light from N[0]."""
    return system([np.asarray(x, dtype=complex) for x in N], d_nm, wl, N[0] * np.sin(np.radians(theta0_deg)), pol)


def system(N, d_nm, wl, a, pol):
    """r, t, T, q of media N (first = incidence) for the invariant a = N sin(theta), which may be complex
    when the light starts in an absorbing substrate; powers normalised with Re of the media's q."""
    q = [branch(Nj ** 2 - a ** 2) for Nj in N]
    one = np.ones_like(wl, dtype=complex)

    def interface(j, k):
        if pol == "s":
            return (q[j] - q[k]) / (q[j] + q[k]), 2 * q[j] / (q[j] + q[k])
        den = N[k] ** 2 * q[j] + N[j] ** 2 * q[k]
        return (N[k] ** 2 * q[j] - N[j] ** 2 * q[k]) / den, 2 * N[j] * N[k] * q[j] / den

    # M is a 2x2 matrix of arrays: [[m00, m01], [m10, m11]]
    r, t = interface(0, 1)
    m = [[one / t, r / t], [r / t, one / t]]
    for j in range(1, len(N) - 1):
        delta = 2 * np.pi * q[j] * d_nm[j - 1] / wl
        p00, p11 = np.exp(1j * delta), np.exp(-1j * delta)
        r, t = interface(j, j + 1)
        b = [[p00 / t, p00 * r / t], [p11 * r / t, p11 / t]]
        m = [[m[0][0] * b[0][0] + m[0][1] * b[1][0], m[0][0] * b[0][1] + m[0][1] * b[1][1]],
             [m[1][0] * b[0][0] + m[1][1] * b[1][0], m[1][0] * b[0][1] + m[1][1] * b[1][1]]]
    r = m[1][0] / m[0][0]
    t = one / m[0][0]
    if pol == "s":
        T = q[-1].real / q[0].real * np.abs(t) ** 2
    else:
        cos_in, cos_out = q[0] / N[0], q[-1] / N[-1]
        T = (np.conj(N[-1]) * cos_out).real / (np.conj(N[0]) * cos_in).real * np.abs(t) ** 2
    return r, t, T, q


def stack(case, theta, pol):
    """R, T of a case dict (n/k lists per medium); incoherent substrate when case['substrate_mm'] is set."""
    wl = np.asarray(case["wavelength_nm"], dtype=float)
    media = [case["ambient"]] + case["layers"] + [case["substrate"]]
    N = [np.asarray(m["n"]) - 1j * np.asarray(m["k"]) for m in media]
    d = [m["thickness_nm"] for m in case["layers"]]
    r, _, T, q = coherent(N, d, wl, theta, pol)
    R = np.abs(r) ** 2
    if case.get("substrate_mm") is None:
        return R, T, r
    # The coating seen from inside the substrate, and the bare back surface substrate -> ambient.
    Rr, Tr = reverse_block(N, d, wl, theta, pol)
    Rb, Tb = reverse_block([N[0], N[-1]], [], wl, theta, pol)
    tau = np.exp(4 * np.pi * q[-1].imag * case["substrate_mm"] * 1e6 / wl)

    def K(Rf, Tf, Rr_, Tr_):
        return [[1 / Tf, -Rr_ / Tf], [Rf / Tf, (Tf * Tr_ - Rf * Rr_) / Tf]]

    def mul(A, B):
        return [[A[0][0] * B[0][0] + A[0][1] * B[1][0], A[0][0] * B[0][1] + A[0][1] * B[1][1]],
                [A[1][0] * B[0][0] + A[1][1] * B[1][0], A[1][0] * B[0][1] + A[1][1] * B[1][1]]]

    # Back surface: from the substrate, R = Rb and T = Tb; from the ambient side the same R, T (bare interface).
    tot = mul(mul(K(R, T, Rr, Tr), [[1 / tau, 0 * tau], [0 * tau, tau]]), K(Rb, Tb, Rb, Tb))
    return tot[1][0] / tot[0][0], 1 / tot[0][0], r


def reverse_block(N, d, wl, theta0, pol):
    """R, T of the coating seen from the last medium (the substrate) towards N[0], for the invariant
    a = N[0] sin(theta0)."""
    r, _, T, _ = system(N[::-1], d[::-1], wl, N[0] * np.sin(np.radians(theta0)), pol)
    return np.abs(r) ** 2, T


def psi_delta(case, theta):
    """Psi, Delta (degrees, Delta in [0, 360)) of the coated front surface (semi-infinite substrate)."""
    wl = np.asarray(case["wavelength_nm"], dtype=float)
    media = [case["ambient"]] + case["layers"] + [case["substrate"]]
    N = [np.asarray(m["n"]) - 1j * np.asarray(m["k"]) for m in media]
    d = [m["thickness_nm"] for m in case["layers"]]
    rs = coherent(N, d, wl, theta, "s")[0]
    rp = coherent(N, d, wl, theta, "p")[0]
    rho = rp / rs
    return np.degrees(np.arctan(np.abs(rho))), np.mod(np.degrees(np.angle(rho)), 360.0)
