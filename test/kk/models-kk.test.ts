/**
 * Every catalogue model that says it is Kramers-Kronig consistent is checked numerically with the check's
 * own transform machinery (src/kk/transform.ts, src/kk/represent.ts), so a wrongly implemented model is
 * caught; Cauchy with an Urbach tail says it is not consistent and the check agrees.
 */
import { describe, expect, it } from 'vitest';
import { checkKramersKronig } from '../../src/kk/check.ts';
import { kkEps1FromPiecewiseLinearEps2 } from '../../src/kk/transform.ts';
import { MODEL_CATALOGUE, buildModel, type DispersionModel } from '../../src/models/catalogue.ts';

/**
 * One parameter set per catalogue model, inside its bounds (invented values except Sellmeier: fused silica,
 * I. H. Malitson, J. Opt. Soc. Am. 55, 1205 (1965); Tauc-Lorentz: the set used to check its closed form against scipy).
 */
const CASES: Record<string, { options?: { terms?: number }; p: Record<string, number> }> = {
  cauchy: { p: { A: 1.6, B: 0.008, C: 0.0002 } },
  sellmeier: {
    options: { terms: 3 },
    p: { A: 1, B1: 0.6961663, C1: 0.0684043 ** 2, B2: 0.4079426, C2: 0.1162414 ** 2, B3: 0.8974794, C3: 9.896161 ** 2 },
  },
  'tauc-lorentz': { p: { A: 122, E0: 3.45, C: 2.54, Eg: 1.2, eps_inf: 1.15 } },
  lorentz: { p: { A: 20, E0: 3, Gamma: 0.6, eps_inf: 1.5 } },
  drude: { p: { Ep: 2.2, Gamma: 0.15, eps_inf: 3.5 } },
};

/** Log-spaced energies 1e-3 … 1e4 eV (ratio 1.0005; the piecewise-linear error near a peak then stays < 1e-4). */
const EXTENDED_EV = Array.from({ length: Math.ceil(Math.log(1e7) / Math.log(1.0005)) + 1 }, (_, i) => 1e-3 * 1.0005 ** i);
const PROBE_EV = [0.35, 0.8, 1.3, 2.05, 2.95, 3.6, 4.7, 6.3];

/** Largest |ε1 − ε∞ − KK[ε2]| at the probe energies, relative to 1 + max|ε1 − ε∞|. */
function kkMismatch(model: DispersionModel, p: Record<string, number>, epsInf: number): { mismatch: number; lossy: boolean } {
  const { eps2 } = model.eps(EXTENDED_EV, p);
  // Below the first sample E₀, take ξ·ε2 as constant (free carriers: ε2 ∝ 1/E; negligible when ε2 → 0): a node
  // at 0 eV with ε2 = 4·ε2(E₀) gives the linear piece the same ∫ξ·ε2 dξ = E₀²·ε2(E₀) over [0, E₀].
  const transformed = kkEps1FromPiecewiseLinearEps2([0, ...EXTENDED_EV], [4 * eps2[0], ...eps2], PROBE_EV);
  const { eps1 } = model.eps(PROBE_EV, p);
  const scale = 1 + Math.max(...eps1.map((e) => Math.abs(e - epsInf)));
  const mismatch = Math.max(...eps1.map((e, i) => Math.abs(e - epsInf - transformed[i]))) / scale;
  return { mismatch, lossy: eps2.some((v) => v > 1e-9) };
}

describe('Kramers-Kronig consistency of the model catalogue', () => {
  it('has a parameter set here for every catalogue model (a new model must be added to this test)', () => {
    expect(Object.keys(CASES).sort()).toEqual(MODEL_CATALOGUE.map((t) => t.name).sort());
  });

  for (const term of MODEL_CATALOGUE.filter((t) => t.kkConsistent)) {
    const { options, p } = CASES[term.name];
    const model = buildModel(term.name, options);
    const epsInf = p.eps_inf ?? p.A;
    const { mismatch, lossy } = kkMismatch(model, p, epsInf);

    if (lossy) {
      it(`${term.name}: ε1 − ε∞ equals the KK transform of its ε2 over 0…1e4 eV (to 1e-4)`, () => {
        expect(model.kkConsistent).toBe(true);
        expect(mismatch).toBeLessThan(1e-4);
      });
    } else {
      // Loss-free (Sellmeier): ε2 is a sum of delta functions outside the validity range, which a sampled ε2
      // cannot show; the check's pole-and-triangle representation must then reproduce n inside the range.
      it(`${term.name}: loss-free, so the KK representation (poles + absorption outside) reproduces n in 210–3710 nm`, () => {
        const wavelengthNm = Array.from({ length: 300 }, (_, i) => 210 + (3500 * i) / 299);
        const { n, k } = model.nk(wavelengthNm, p);
        const report = checkKramersKronig({ wavelengthNm, n, k });
        expect(report.verdict).toBe('uninformative');
        expect(report.max_dn).toBeLessThan(1e-3);
      });
    }
  }

  it('catches a wrongly implemented model: a Lorentz whose ε1 resonance sits 2% off its ε2 resonance', () => {
    const lorentz = buildModel('lorentz');
    const p = CASES.lorentz.p;
    const broken: DispersionModel = {
      ...lorentz,
      eps: (energyEv, q) => ({
        eps1: lorentz.eps(energyEv, { ...q, E0: q.E0 * 1.02 }).eps1,
        eps2: lorentz.eps(energyEv, q).eps2,
      }),
    };
    expect(kkMismatch(broken, p, p.eps_inf).mismatch).toBeGreaterThan(1e-2);
  });

  it('catches a loss-free model whose n falls with photon energy (a sign slip in a Sellmeier term)', () => {
    const sellmeier = buildModel('sellmeier', { terms: 3 });
    const wavelengthNm = Array.from({ length: 300 }, (_, i) => 210 + (3500 * i) / 299);
    const good = sellmeier.nk(wavelengthNm, CASES.sellmeier.p).n;
    const n = good.map((v) => 2 * good[good.length - 1] - v); // mirror: n now decreases towards the UV
    expect(checkKramersKronig({ wavelengthNm, n, k: n.map(() => 0) }).verdict).toBe('inconsistent');
  });

  it('Cauchy with an Urbach tail states it is not consistent, and the check finds a strong tail inconsistent', () => {
    const model = buildModel('cauchy', { urbach: true });
    expect(model.kkConsistent).toBe(false);
    expect(buildModel('cauchy').kkConsistent).toBe(false);
    const wavelengthNm = Array.from({ length: 301 }, (_, i) => 300 + 3 * i);
    const { n, k } = model.nk(wavelengthNm, { A: 1.6, B: 0.008, C: 0.0002, k0: 0.05, Eu: 0.2, Eb: 3.6 });
    expect(Math.max(...k)).toBeGreaterThan(0.3);
    expect(checkKramersKronig({ wavelengthNm, n, k }).verdict).toBe('inconsistent');
  });
});
