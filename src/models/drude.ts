/**
 * Drude free carriers: ε = ε∞ − Ep²/(E² + iΓE) (Ep, Γ in eV), for transparent conductors and metals.
 * Textbook form (H. Fujiwara, Spectroscopic Ellipsometry, Wiley 2007, ch. 5). Causal, so
 * Kramers-Kronig consistent. Written out: ε1 = −Ep²/(E² + Γ²), ε2 = Ep²Γ/(E(E² + Γ²)).
 */
import { clamp } from './grid.ts';
import type { GuessData, ModelTerm, ParameterSpec, SpectralGrid, TermOptions, TermOutput } from './types.ts';
import { maxOf } from '../optics/extremes.ts';

const PARAMETERS: ParameterSpec[] = [
  {
    name: 'Ep',
    unit: 'eV',
    meaning: 'unscreened plasma energy',
    bounds: [0, 40],
    guessRule: 'linear least squares of ε on Ep² and the other amplitudes',
  },
  {
    name: 'Gamma',
    unit: 'eV',
    meaning: 'carrier scattering rate (broadening)',
    bounds: [1e-3, 10],
    guessRule: 'E·ε2/(ε1,max − ε1) at the lowest fitted energy when ε1 has dropped there, else 0.1 eV',
  },
];

function guess(data: GuessData): number[] {
  let low = 0;
  for (let i = 1; i < data.energyEv.length; i++) if (data.energyEv[i] < data.energyEv[low]) low = i;
  const background = maxOf(data.eps1);
  const drop = background - data.eps1[low];
  // ε2/(ε∞ − ε1) = Γ/E for a pure Drude response
  const gamma = drop > 0.5 ? (data.energyEv[low] * data.eps2[low]) / drop : 0.1;
  const ep = drop > 0 ? Math.sqrt(drop) * data.energyEv[low] : 1;
  return [clamp(ep, PARAMETERS[0].bounds), clamp(gamma, [0.01, 2])];
}

function evaluate(grid: SpectralGrid, p: Float64Array, _options: TermOptions, out: TermOutput): void {
  const [ep, gamma] = p;
  const ep2 = ep * ep;
  for (let i = 0; i < grid.energyEv.length; i++) {
    const e = grid.energyEv[i];
    const s = 1 / (e * e + gamma * gamma);
    out.re[i] -= ep2 * s;
    out.im[i] += (ep2 * gamma * s) / e;
    if (out.dRe && out.dIm) {
      out.dRe[0][i] = -2 * ep * s;
      out.dIm[0][i] = (2 * ep * gamma * s) / e;
      out.dRe[1][i] = 2 * ep2 * gamma * s * s;
      out.dIm[1][i] = (ep2 * (e * e - gamma * gamma) * s * s) / e;
    }
  }
}

export const drude: ModelTerm = {
  name: 'drude',
  summary: 'ε = ε∞ − Ep²/(E² + iΓE); Ep and Γ (Gamma) in eV',
  quantity: 'eps',
  summable: true,
  usesEpsInf: true,
  kkConsistent: true,
  absorbing: () => true,
  oscillators: () => [{ strength: 0, position: 1 }],
  validity: [
    'Drude describes free carriers (metals, doped semiconductors, transparent conductors such as ITO); add interband terms for the visible/UV.',
  ],
  parameters: () => PARAMETERS,
  guess: (data) => guess(data),
  amplitudes: () => [{ index: 0, power: 2 }],
  evaluate,
};
