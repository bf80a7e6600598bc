"""Independent numpy implementations of the nkledger dispersion models and fit residuals, for the
reference fixtures (make-fit-reference.py) and the benchmark (bench_fit_scipy.py). Written from the
published formulas (see docs/references.md), not from the TypeScript sources."""
import numpy as np

HC_EV_NM = 1239.841984  # CODATA 2018


def tauc_lorentz_eps(e, A, E0, C, Eg):
    """Jellison & Modine, APL 69, 371 (1996) + erratum: eps2 and the closed-form eps1 - eps_inf."""
    e = np.asarray(e, dtype=float)
    alpha = np.sqrt(4 * E0**2 - C**2)
    gamma2 = E0**2 - C**2 / 2
    zeta4 = (e**2 - gamma2) ** 2 + alpha**2 * C**2 / 4
    a_ln = (Eg**2 - E0**2) * e**2 + Eg**2 * C**2 - E0**2 * (E0**2 + 3 * Eg**2)
    a_atan = (e**2 - E0**2) * (E0**2 + Eg**2) + Eg**2 * C**2
    t1 = A * C * a_ln / (2 * np.pi * zeta4 * alpha * E0) * np.log((E0**2 + Eg**2 + alpha * Eg) / (E0**2 + Eg**2 - alpha * Eg))
    t2 = -A * a_atan / (np.pi * zeta4 * E0) * (np.pi - np.arctan((2 * Eg + alpha) / C) + np.arctan((alpha - 2 * Eg) / C))
    t3 = 2 * A * E0 * Eg / (np.pi * zeta4 * alpha) * (e**2 - gamma2) * (np.pi + 2 * np.arctan(2 * (gamma2 - Eg**2) / (alpha * C)))
    t4 = -A * E0 * C * (e**2 + Eg**2) / (np.pi * zeta4 * e) * np.log(np.abs(e - Eg) / (e + Eg))
    t5 = 2 * A * E0 * C * Eg / (np.pi * zeta4) * np.log(np.abs(e - Eg) * (e + Eg) / np.sqrt((E0**2 - Eg**2) ** 2 + Eg**2 * C**2))
    eps1 = t1 + t2 + t3 + t4 + t5
    eps2 = np.where(e > Eg, A * E0 * C * (e - Eg) ** 2 / (((e**2 - E0**2) ** 2 + C**2 * e**2) * e), 0.0)
    return eps1 + 1j * eps2


def lorentz_eps(e, A, E0, G):
    return A / (E0**2 - e**2 - 1j * G * e)


def drude_eps(e, Ep, G):
    return -(Ep**2) / (e**2 + 1j * G * e)


# Each model: parameter names (free, in nkledger order), fixed values, and N = n + ik on a wavelength grid (nm).
def sellmeier_nk(nm, p, terms):
    um2 = (np.asarray(nm) / 1e3) ** 2
    eps = p.get("A", 1.0) + sum(p[f"B{i}"] * um2 / (um2 - p[f"C{i}"]) for i in range(1, terms + 1))
    return np.sqrt(eps + 0j)


def tauc_lorentz_nk(nm, p):
    e = HC_EV_NM / np.asarray(nm)
    return np.sqrt(p["eps_inf"] + tauc_lorentz_eps(e, p["A"], p["E0"], p["C"], p["Eg"]))


def lorentz_drude_nk(nm, p):
    e = HC_EV_NM / np.asarray(nm)
    eps = p["eps_inf"] + lorentz_eps(e, p["lorentz.A"], p["lorentz.E0"], p["lorentz.Gamma"]) + drude_eps(e, p["drude.Ep"], p["drude.Gamma"])
    return np.sqrt(eps)


def residuals(nk_fn, names, fixed, nm, n, k, sigma_n, sigma_k):
    """Whitened residuals over n then k, the layout nkledger uses (target nk, sigma columns)."""
    def f(x):
        p = dict(fixed)
        p.update(zip(names, x))
        N = nk_fn(nm, p)
        return np.concatenate([(n - N.real) / sigma_n, (k - N.imag) / sigma_k])
    return f
