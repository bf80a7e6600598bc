/**
 * Cauchy: n = A + B/λ² + C/λ⁴ (λ in µm, B in µm², C in µm⁴), with an optional Urbach absorption tail
 * k = k0·exp((E − Eb)/Eu) (Eu in eV, Eb a fixed reference energy in eV). Textbook form (H. Fujiwara,
 * Spectroscopic Ellipsometry, Wiley 2007, ch. 5; F. Urbach, Phys. Rev. 92, 1324 (1953)).
 * n and k are independent empirical functions, so the model is NOT Kramers-Kronig consistent.
 */
import { clamp } from './grid.ts';
import type { GuessData, ModelTerm, ParameterSpec, SpectralGrid, TermOptions, TermOutput } from './types.ts';
import { maxOf } from '../optics/extremes.ts';

const INDEX_PARAMETERS: ParameterSpec[] = [
  { name: 'A', unit: '1', meaning: 'index at long wavelength', bounds: [1, 5], guessRule: 'linear least squares of n on 1, λ⁻², λ⁻⁴' },
  { name: 'B', unit: 'µm²', meaning: 'λ⁻² dispersion coefficient', bounds: [-1, 1], guessRule: 'linear least squares of n on 1, λ⁻², λ⁻⁴' },
  { name: 'C', unit: 'µm⁴', meaning: 'λ⁻⁴ dispersion coefficient', bounds: [-0.1, 0.1], guessRule: 'linear least squares of n on 1, λ⁻², λ⁻⁴' },
];

const URBACH_PARAMETERS: ParameterSpec[] = [
  {
    name: 'k0',
    unit: '1',
    meaning: 'extinction coefficient at E = Eb',
    bounds: [0, 10],
    guessRule: 'straight-line fit of ln k against E over points with k > 0',
  },
  {
    name: 'Eu',
    unit: 'eV',
    meaning: 'Urbach energy (tail width)',
    bounds: [0.005, 5],
    guessRule: 'straight-line fit of ln k against E (slope 1/Eu)',
  },
  {
    name: 'Eb',
    unit: 'eV',
    meaning: 'fixed reference energy of the tail',
    bounds: [0.1, 20],
    guessRule: 'highest photon energy in the fitted range',
    fixedByDefault: true,
  },
];

function evaluate(grid: SpectralGrid, p: Float64Array, options: TermOptions, out: TermOutput): void {
  const [a, b, c] = p;
  const count = grid.wavelengthUm.length;
  for (let i = 0; i < count; i++) {
    const inv2 = 1 / (grid.wavelengthUm[i] * grid.wavelengthUm[i]);
    out.re[i] += a + b * inv2 + c * inv2 * inv2;
    if (out.dRe && out.dIm) {
      out.dRe[0][i] = 1;
      out.dRe[1][i] = inv2;
      out.dRe[2][i] = inv2 * inv2;
      out.dIm[0][i] = out.dIm[1][i] = out.dIm[2][i] = 0;
    }
  }
  if (!options.urbach) return;
  const [k0, eu, eb] = [p[3], p[4], p[5]];
  for (let i = 0; i < count; i++) {
    const e = grid.energyEv[i];
    const tail = Math.exp((e - eb) / eu);
    out.im[i] += k0 * tail;
    if (out.dRe && out.dIm) {
      out.dRe[3][i] = out.dRe[4][i] = out.dRe[5][i] = 0;
      out.dIm[3][i] = tail;
      out.dIm[4][i] = (-k0 * tail * (e - eb)) / (eu * eu);
      out.dIm[5][i] = (-k0 * tail) / eu;
    }
  }
}

function guess(data: GuessData, options: TermOptions): number[] {
  const inv2 = Array.from(data.wavelengthUm, (um) => 1 / (um * um));
  const ones = inv2.map(() => 1);
  const [a, b, c] = data.leastSquares([ones, inv2, inv2.map((v) => v * v)], data.n);
  const index = [clamp(a, INDEX_PARAMETERS[0].bounds), clamp(b, INDEX_PARAMETERS[1].bounds), clamp(c, INDEX_PARAMETERS[2].bounds)];
  if (!options.urbach) return index;
  const eb = maxOf(data.energyEv);
  const absorbing = Array.from(data.k.keys()).filter((i) => data.k[i] > 0);
  let k0 = 1e-3;
  let eu = 0.1;
  if (absorbing.length >= 2) {
    const e = absorbing.map((i) => data.energyEv[i] - eb);
    const [lnK0, slope] = data.leastSquares(
      [e.map(() => 1), e],
      absorbing.map((i) => Math.log(data.k[i])),
    );
    k0 = Math.exp(lnK0);
    eu = slope > 0 ? 1 / slope : 0.1;
  }
  return [...index, clamp(k0, URBACH_PARAMETERS[0].bounds), clamp(eu, URBACH_PARAMETERS[1].bounds), eb];
}

export const cauchy: ModelTerm = {
  name: 'cauchy',
  summary: 'n = A + B/λ² + C/λ⁴ (λ in µm), optional Urbach tail k = k0·exp((E − Eb)/Eu)',
  quantity: 'nk',
  summable: false,
  usesEpsInf: false,
  kkConsistent: false,
  absorbing: (options) => options.urbach,
  validity: [
    'Cauchy is an empirical expansion for the transparent or weakly absorbing region, far from absorption bands.',
    'Cauchy n and the Urbach k are independent formulas: the model is NOT Kramers-Kronig consistent, so n and k from it need not belong to one physical material.',
  ],
  urbach: { meaning: 'add the Urbach absorption tail k = k0·exp((E − Eb)/Eu) with Eb fixed (default: the highest photon energy fitted)' },
  parameters: (options) => (options.urbach ? [...INDEX_PARAMETERS, ...URBACH_PARAMETERS] : INDEX_PARAMETERS),
  guess,
  evaluate,
};
