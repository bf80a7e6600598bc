#!/usr/bin/env python3
"""Generate the INVENTED demo data of the fictional Marrowick Optics coatings lab.

Writes data/marrowick/*.{csv,txt,tsv,dat}, data/marrowick/truth.json (model spec, exact generating
parameters, noise and seed per file) and test/reference/marrowick-truth.json (the noise-free n, k and
eps on every file's grid, which the TypeScript tests compare the imported files against).

Nothing here is a real measurement: the parameters are invented, chosen near typical values of the
trade so that the tables look like what an ellipsometry lab exports. Run: python3 scripts/make-demo-data.py
Needs numpy (written with numpy 2.4.6); scipy (1.17.1) is used only to cross-check the Tauc-Lorentz
closed form against a principal-value integral before anything is written.

Formulas (published forms, see /work/shared/references.md):
- Tauc-Lorentz: G. E. Jellison Jr. and F. A. Modine, Appl. Phys. Lett. 69, 371 (1996) and erratum 69, 2137.
- Drude eps = -Ep^2/(E^2 + i*Gamma*E); Cauchy n = A + B/l^2 + C/l^4 (l in um) with the Urbach tail
  k = k0*exp((E - Eb)/Eu); Sellmeier n^2 = A + sum Bi*l^2/(l^2 - Ci) (l in um). Textbook forms
  (H. Fujiwara, Spectroscopic Ellipsometry, Wiley 2007, ch. 5).
"""
import json
import os

import numpy as np

HC_EV_NM = 1239.841984  # CODATA 2018 exact h, c, e
ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), '..')
OUT = os.path.join(ROOT, 'data', 'marrowick')
REF = os.path.join(ROOT, 'test', 'reference')
INVENTED = 'INVENTED demo data of the fictional Marrowick Optics lab - not a real measurement'


# ---------------------------------------------------------------- models (eps as functions of E in eV)
def tauc_lorentz_eps2(E, A, E0, C, Eg):
    E = np.asarray(E, dtype=float)
    out = A * E0 * C * (E - Eg) ** 2 / (((E**2 - E0**2) ** 2 + C**2 * E**2) * E)
    return np.where(E > Eg, out, 0.0)


def tauc_lorentz_eps1(E, A, E0, C, Eg, eps_inf):
    """Closed form of Jellison & Modine 1996 (with the erratum), as written in references.md."""
    E = np.asarray(E, dtype=float)
    alpha = np.sqrt(4 * E0**2 - C**2)
    gamma2 = E0**2 - C**2 / 2
    zeta4 = (E**2 - gamma2) ** 2 + alpha**2 * C**2 / 4
    a_ln = (Eg**2 - E0**2) * E**2 + Eg**2 * C**2 - E0**2 * (E0**2 + 3 * Eg**2)
    a_atan = (E**2 - E0**2) * (E0**2 + Eg**2) + Eg**2 * C**2
    pi = np.pi
    t1 = A * C * a_ln / (2 * pi * zeta4 * alpha * E0) * np.log(
        (E0**2 + Eg**2 + alpha * Eg) / (E0**2 + Eg**2 - alpha * Eg))
    t2 = -A * a_atan / (pi * zeta4 * E0) * (pi - np.arctan((2 * Eg + alpha) / C) + np.arctan((alpha - 2 * Eg) / C))
    t3 = 2 * A * E0 * Eg / (pi * zeta4 * alpha) * (E**2 - gamma2) * (pi + 2 * np.arctan(2 * (gamma2 - Eg**2) / (alpha * C)))
    t4 = -A * E0 * C * (E**2 + Eg**2) / (pi * zeta4 * E) * np.log(np.abs(E - Eg) / (E + Eg))
    t5 = 2 * A * E0 * C * Eg / (pi * zeta4) * np.log(
        np.abs(E - Eg) * (E + Eg) / np.sqrt((E0**2 - Eg**2) ** 2 + Eg**2 * C**2))
    return eps_inf + t1 + t2 + t3 + t4 + t5


def tauc_lorentz(E, A, E0, C, Eg, eps_inf):
    return tauc_lorentz_eps1(E, A, E0, C, Eg, eps_inf) + 1j * tauc_lorentz_eps2(E, A, E0, C, Eg)


def drude(E, Ep, Gamma):
    E = np.asarray(E, dtype=float)
    return -Ep**2 / (E**2 + 1j * Gamma * E)


def nk_from_eps(eps):
    N = np.sqrt(eps.astype(complex))  # principal branch: n >= 0, k >= 0 for eps2 >= 0
    return N.real, N.imag


def cauchy_nk(wl_nm, A, B, C, k0=0.0, Eu=1.0, Eb=0.0):
    lum = wl_nm / 1000.0
    n = A + B / lum**2 + C / lum**4
    k = k0 * np.exp((HC_EV_NM / wl_nm - Eb) / Eu) if k0 else np.zeros_like(wl_nm)
    return n, k


def sellmeier_n(wl_nm, A, terms):
    l2 = (wl_nm / 1000.0) ** 2
    return np.sqrt(A + sum(B * l2 / (l2 - C) for B, C in terms))


def check_tauc_lorentz_closed_form():
    """Cross-check against scipy's Cauchy-weighted quad (eps1 = eps_inf + 2/pi P int xi eps2/(xi^2 - E^2))."""
    from scipy.integrate import quad
    p = dict(A=122.0, E0=3.45, C=2.54, Eg=1.20)
    assert abs(tauc_lorentz_eps1(2.0, eps_inf=1.15, **p) - 17.6351116) < 1e-6  # value quoted in references.md
    for E in (0.8, 1.6, 2.5, 4.0, 6.0):
        f = lambda xi: xi * tauc_lorentz_eps2(xi, **p) / (xi + E)
        pv, _ = quad(f, p['Eg'], 200.0, weight='cauchy', wvar=E, limit=400)
        tail, _ = quad(lambda xi: xi * tauc_lorentz_eps2(xi, **p) / (xi**2 - E**2), 200.0, np.inf)
        numeric = 1.15 + 2 / np.pi * (pv + tail)
        assert abs(numeric - tauc_lorentz_eps1(E, eps_inf=1.15, **p)) < 1e-6, (E, numeric)


# ---------------------------------------------------------------- formatting helpers
def fmt(values, decimals, decimal_comma=False):
    out = [f'{v:.{decimals}f}' for v in values]
    return [s.replace('.', ',') for s in out] if decimal_comma else out


def write(name, header_lines, column_names, columns, sep=',', newline='\n', bom=False):
    rows = [sep.join(cells) for cells in zip(*columns)]
    text = newline.join([*(f'# {h}' for h in header_lines), sep.join(column_names), *rows]) + newline
    with open(os.path.join(OUT, name), 'w', encoding='utf-8', newline='') as fh:
        fh.write(('\ufeff' if bom else '') + text)


def noisy(rng, values, sigma):
    return values + rng.normal(0.0, 1.0, np.shape(values)) * sigma


def instrument_k(rng, k, sigma, floor):
    """Measured k: noise, then the instrument software's clip at `floor` (0 or a small negative value)."""
    return np.maximum(noisy(rng, k, sigma), floor)


# ---------------------------------------------------------------- the lab's files
def main():
    check_tauc_lorentz_closed_form()
    os.makedirs(OUT, exist_ok=True)
    os.makedirs(REF, exist_ok=True)
    truth = {'_note': INVENTED + '. Generated by scripts/make-demo-data.py (numpy ' + np.__version__ + ').'}
    reference = {'_note': 'Noise-free n, k (and eps1, eps2) of the generating model on every demo file grid; '
                          'made by scripts/make-demo-data.py with numpy ' + np.__version__ + '.', 'files': {}}

    def record(name, entry, wl, n, k):
        truth[name] = entry
        eps = (n + 1j * k) ** 2
        reference['files'][name] = {'wavelength_nm': [round(float(w), 9) for w in wl],
                                    'n': n.tolist(), 'k': k.tolist(),
                                    'eps1': eps.real.tolist(), 'eps2': eps.imag.tolist()}

    # 1. PECVD SiNx, recipe A (near-stoichiometric): nm grid, comma separated, sigma columns.
    seed = 11
    rng = np.random.default_rng(seed)
    p = dict(A=112.0, E0=9.2, C=5.6, Eg=4.6, eps_inf=1.85)
    wl = np.arange(250.0, 1700.0 + 1e-9, 5.0)
    n, k = nk_from_eps(tauc_lorentz(HC_EV_NM / wl, **p))
    sigma_n = 8e-4 + 6e-4 * (300.0 / wl) ** 2  # larger in the UV, as ellipsometry fits report
    sigma_k = 2e-4 + 3e-4 * (300.0 / wl) ** 2
    n_meas = noisy(rng, n, sigma_n)
    k_meas = instrument_k(rng, k, sigma_k, -5e-4)
    write('sinx-pecvd-recipe-a.csv',
          [INVENTED, 'Material: PECVD SiNx, recipe A (SiH4/NH3 = 1:8, 300 C), run MW-2291 on Si',
           'Exported from ellipsometry analysis: point-by-point n,k with 1-sigma uncertainties'],
          ['Wavelength (nm)', 'n', 'k', 'sigma_n', 'sigma_k'],
          [fmt(wl, 1), fmt(n_meas, 5), fmt(k_meas, 5), fmt(sigma_n, 5), fmt(sigma_k, 5)])
    record('sinx-pecvd-recipe-a.csv', {
        'material': 'PECVD silicon nitride, recipe A', 'model': 'tauc-lorentz', 'parameters': p,
        'x_unit': 'nm', 'range_nm': [250, 1700], 'points': len(wl),
        'noise': {'n': '1-sigma = 8e-4 + 6e-4*(300/nm)^2 (the sigma_n column)',
                  'k': '1-sigma = 2e-4 + 3e-4*(300/nm)^2 (the sigma_k column), clipped at -5e-4'},
        'seed': seed, 'dialect': 'comma separated, header with units, sigma_n/sigma_k columns'}, wl, n, k)

    # 2. PECVD SiNx, recipe B (silicon-rich): UTF-8 BOM, comma separated, 2 nm grid.
    seed = 12
    rng = np.random.default_rng(seed)
    p = dict(A=138.0, E0=8.1, C=5.0, Eg=4.05, eps_inf=1.8)
    wl = np.arange(250.0, 1700.0 + 1e-9, 2.0)
    n, k = nk_from_eps(tauc_lorentz(HC_EV_NM / wl, **p))
    n_meas = noisy(rng, n, 1e-3)
    k_meas = instrument_k(rng, k, 3e-4, -5e-4)
    write('sinx-pecvd-recipe-b.csv',
          [INVENTED, 'Material: PECVD SiNx, recipe B (SiH4/NH3 = 1:3, Si-rich), run MW-2307 on Si'],
          ['lambda [nm]', 'n', 'k'], [fmt(wl, 1), fmt(n_meas, 5), fmt(k_meas, 5)], bom=True)
    record('sinx-pecvd-recipe-b.csv', {
        'material': 'PECVD silicon nitride, recipe B (Si-rich)', 'model': 'tauc-lorentz', 'parameters': p,
        'x_unit': 'nm', 'range_nm': [250, 1700], 'points': len(wl),
        'noise': {'n': 1e-3, 'k': '3e-4, clipped at -5e-4'}, 'seed': seed,
        'dialect': 'UTF-8 BOM, comma separated'}, wl, n, k)

    # 3. ALD alumina: Cauchy + Urbach tail, exported in um with decimal commas and ';'.
    seed = 13
    rng = np.random.default_rng(seed)
    p = dict(A=1.6185, B=0.00562, C=0.000118, k0=4.0e-4, Eu=0.55, Eb=4.0)
    wl = np.arange(250.0, 1700.0 + 1e-9, 5.0)
    n, k = cauchy_nk(wl, **p)
    n_meas = noisy(rng, n, 1e-3)
    k_meas = instrument_k(rng, k, 2e-4, -5e-4)
    write('al2o3-ald.csv',
          [INVENTED, 'Material: ALD Al2O3, TMA/H2O 200 C, 500 cycles (MW-ALD-0412)',
           'Separator ";", decimal comma (regional export settings)'],
          ['Wellenlaenge (um)', 'n', 'k'], [fmt(wl / 1000.0, 4, True), fmt(n_meas, 5, True), fmt(k_meas, 5, True)],
          sep=';')
    record('al2o3-ald.csv', {
        'material': 'ALD aluminium oxide', 'model': 'cauchy', 'parameters': p,
        'parameter_notes': 'Eb is the fixed Urbach reference energy (eV), not fitted',
        'x_unit': 'um', 'range_nm': [250, 1700], 'points': len(wl),
        'noise': {'n': 1e-3, 'k': '2e-4, clipped at -5e-4'}, 'seed': seed,
        'dialect': 'semicolon separated, decimal commas, wavelength in um'}, wl, n, k)

    # 4. Sputtered ITO: Tauc-Lorentz + Drude, 300-1700 nm, tab separated.
    seed = 14
    rng = np.random.default_rng(seed)
    tl = dict(A=30.0, E0=5.2, C=1.4, Eg=3.85)
    dr = dict(Ep=1.7, Gamma=0.13)
    eps_inf = 3.7
    wl = np.arange(300.0, 1700.0 + 1e-9, 5.0)
    E = HC_EV_NM / wl
    n, k = nk_from_eps(tauc_lorentz(E, eps_inf=eps_inf, **tl) + drude(E, **dr))
    n_meas = noisy(rng, n, 1.5e-3)
    k_meas = instrument_k(rng, k, 5e-4, -5e-4)
    write('ito-sputtered.tsv',
          [INVENTED, 'Material: DC-sputtered ITO (In2O3:SnO2 90:10), 150 nm, 0.3 % O2, annealed 250 C',
           'Tab separated export'],
          ['Wavelength(nm)', 'n', 'k'], [fmt(wl, 1), fmt(n_meas, 5), fmt(k_meas, 5)], sep='\t')
    record('ito-sputtered.tsv', {
        'material': 'sputtered indium tin oxide', 'model': 'tauc-lorentz+drude',
        'parameters': {**{f'tauc-lorentz.{key}': v for key, v in tl.items()},
                       **{f'drude.{key}': v for key, v in dr.items()}, 'eps_inf': eps_inf},
        'x_unit': 'nm', 'range_nm': [300, 1700], 'points': len(wl),
        'noise': {'n': 1.5e-3, 'k': '5e-4, clipped at -5e-4'}, 'seed': seed,
        'dialect': 'tab separated'}, wl, n, k)

    # 5. a-Si:H: Tauc-Lorentz, exported in eV with eps1/eps2 columns, whitespace separated, ascending eV.
    seed = 15
    rng = np.random.default_rng(seed)
    p = dict(A=205.0, E0=3.62, C=2.25, Eg=1.66, eps_inf=1.05)
    E = np.round(np.arange(0.75, 4.75 + 1e-9, 0.02), 2)
    eps = tauc_lorentz(E, **p)
    e1 = noisy(rng, eps.real, 0.01)
    e2 = np.maximum(noisy(rng, eps.imag, 0.005), -0.004)
    wl = HC_EV_NM / E
    n, k = nk_from_eps(eps)
    write('a-si-h.txt',
          [INVENTED, 'Material: a-Si:H, PECVD 200 C, H content ~10 at.% (MW-2214)',
           'Dielectric function, photon energy grid'],
          ['PhotonEnergy[eV]', 'e1', 'e2'], [fmt(E, 3), fmt(e1, 4), fmt(e2, 4)], sep='  ')
    record('a-si-h.txt', {
        'material': 'hydrogenated amorphous silicon', 'model': 'tauc-lorentz', 'parameters': p,
        'x_unit': 'eV', 'range_nm': [round(HC_EV_NM / 4.75, 3), round(HC_EV_NM / 0.75, 3)], 'points': len(E),
        'noise': {'eps1': 0.01, 'eps2': '0.005, clipped at -0.004'}, 'seed': seed,
        'dialect': 'whitespace separated, photon energy in eV, eps1/eps2 columns (e1, e2)'}, wl, n, k)

    # 6. Thermal oxide: 3-term Sellmeier, invented coefficients near (not equal to) published fused silica; CRLF.
    seed = 16
    rng = np.random.default_rng(seed)
    terms = [(0.6958, 0.004712), (0.4102, 0.01372), (0.8890, 97.40)]
    p = dict(A=1.0, B1=terms[0][0], C1=terms[0][1], B2=terms[1][0], C2=terms[1][1], B3=terms[2][0], C3=terms[2][1])
    wl = np.arange(220.0, 1700.0 + 1e-9, 4.0)
    n = sellmeier_n(wl, 1.0, terms)
    k = np.zeros_like(wl)
    n_meas = noisy(rng, n, 3e-4)
    write('sio2-thermal.csv',
          [INVENTED, 'Material: thermal SiO2, wet oxidation 1000 C, 1.2 um on Si (MW-OX-118)',
           'Transparent: n only'],
          ['wavelength (nm)', 'n'], [fmt(wl, 1), fmt(n_meas, 5)], newline='\r\n')
    record('sio2-thermal.csv', {
        'material': 'thermal silicon oxide', 'model': 'sellmeier', 'terms': 3, 'parameters': p,
        'x_unit': 'nm', 'range_nm': [220, 1700], 'points': len(wl),
        'noise': {'n': 3e-4}, 'seed': seed, 'dialect': 'CRLF line ends, no k column'}, wl, n, k)

    # 7. Evaporated MgF2: Cauchy + weak Urbach tail, descending wavenumber in cm-1, software clips k at 0.
    seed = 17
    rng = np.random.default_rng(seed)
    p = dict(A=1.3712, B=0.00352, C=0.0000215, k0=2.0e-5, Eu=0.8, Eb=4.0)
    nu = np.arange(40000.0, 5800.0 - 1e-9, -100.0)
    wl = 1e7 / nu
    n, k = cauchy_nk(wl, **p)
    n_meas = noisy(rng, n, 1e-3)
    k_meas = instrument_k(rng, k, 1e-4, 0.0)
    write('mgf2-evaporated.csv',
          [INVENTED, 'Material: e-beam evaporated MgF2, 250 C substrate, 95 nm (MW-EV-077)',
           'Spectrophotometer-derived n,k on a wavenumber grid, descending'],
          ['Wavenumber (cm-1)', 'n', 'k'], [fmt(nu, 0), fmt(n_meas, 5), fmt(k_meas, 5)])
    record('mgf2-evaporated.csv', {
        'material': 'evaporated magnesium fluoride', 'model': 'cauchy', 'parameters': p,
        'parameter_notes': 'Eb is the fixed Urbach reference energy (eV), not fitted',
        'x_unit': 'cm-1', 'range_nm': [250, round(1e7 / 5800.0, 3)], 'points': len(nu),
        'noise': {'n': 1e-3, 'k': '1e-4, clipped at 0'}, 'seed': seed,
        'dialect': 'wavenumber in cm-1, descending'}, wl, n, k)

    with open(os.path.join(OUT, 'truth.json'), 'w', encoding='utf-8') as fh:
        json.dump(truth, fh, indent=2)
        fh.write('\n')
    with open(os.path.join(REF, 'marrowick-truth.json'), 'w', encoding='utf-8') as fh:
        json.dump(reference, fh)
        fh.write('\n')


if __name__ == '__main__':
    main()
