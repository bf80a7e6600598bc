/**
 * Lorentz oscillators: ε = ε∞ + Σⱼ Aⱼ/(E0ⱼ² − E² − iΓⱼE) (Aⱼ in eV², E0ⱼ and Γⱼ in eV). Textbook form
 * (H. Fujiwara, Spectroscopic Ellipsometry, Wiley 2007, ch. 5). Causal, so Kramers-Kronig consistent.
 * With one oscillator the parameters are A, E0, Gamma; with N they carry the suffix 1…N (A1, E01, Gamma1, …).
 */
import { clamp, halfWidth, oscillatorName, peakIndices } from './grid.ts';
import type { Amplitude, GuessData, ModelTerm, ParameterSpec, SpectralGrid, TermOptions, TermOutput } from './types.ts';
import { maxOf } from '../optics/extremes.ts';

const A_BOUNDS: [number, number] = [0, 1e4];
const E0_BOUNDS: [number, number] = [0.01, 40];
const GAMMA_BOUNDS: [number, number] = [1e-3, 20];

function parameters(options: TermOptions): ParameterSpec[] {
  const list: ParameterSpec[] = [];
  for (let j = 1; j <= options.terms; j++) {
    const which = options.terms > 1 ? ` of oscillator ${j}` : '';
    list.push(
      {
        name: oscillatorName('A', j, options.terms),
        unit: 'eV²',
        meaning: `strength${which}`,
        bounds: A_BOUNDS,
        guessRule: 'linear least squares of ε on all amplitudes with the other parameters at their guesses',
      },
      {
        name: oscillatorName('E0', j, options.terms),
        unit: 'eV',
        meaning: `resonance energy${which}`,
        bounds: E0_BOUNDS,
        guessRule: 'energy of the j-th highest ε2 peak; above the fitted range when there is none',
      },
      {
        name: oscillatorName('Gamma', j, options.terms),
        unit: 'eV',
        meaning: `broadening${which}`,
        bounds: GAMMA_BOUNDS,
        guessRule: 'full width at half maximum of that ε2 peak; 0.1 × E0 without a peak',
      },
    );
  }
  return list;
}

/**
 * Guess E0, Γ (and a rough A) for `count` oscillators: the highest ε2 peaks inside the data first,
 * then resonances spaced above the highest fitted energy (transparent-region fits).
 */
export function oscillatorGuesses(data: GuessData, count: number): { e0: number; width: number; height: number }[] {
  const peaks = peakIndices(data.eps2);
  const eMax = maxOf(data.energyEv);
  const interior = peaks.filter((i) => i > 0 && i < data.energyEv.length - 1);
  const list = interior.slice(0, count).map((i) => ({
    e0: data.energyEv[i],
    width: halfWidth(data.energyEv, data.eps2, i, 0.2 * data.energyEv[i]),
    height: data.eps2[i],
  }));
  for (let m = 0; list.length < count; m++) list.push({ e0: eMax * (1.3 + 0.5 * m), width: 0.13 * eMax, height: 0 });
  return list.sort((a, b) => a.e0 - b.e0);
}

function guess(data: GuessData, options: TermOptions): number[] {
  const values: number[] = [];
  for (const o of oscillatorGuesses(data, options.terms)) {
    const gamma = clamp(o.width, GAMMA_BOUNDS);
    // at E = E0 the Lorentz ε2 peaks at A/(Γ·E0)
    values.push(clamp(o.height > 0 ? o.height * gamma * o.e0 : 1, A_BOUNDS), clamp(o.e0, E0_BOUNDS), gamma);
  }
  return values;
}

function evaluate(grid: SpectralGrid, p: Float64Array, options: TermOptions, out: TermOutput): void {
  const count = grid.energyEv.length;
  for (let t = 0; t < options.terms; t++) {
    const [a, e0, gamma] = [p[3 * t], p[3 * t + 1], p[3 * t + 2]];
    for (let i = 0; i < count; i++) {
      const e = grid.energyEv[i];
      // 1/(u − iv) = (u + iv)/D with u = E0² − E², v = ΓE, D = u² + v²
      const u = e0 * e0 - e * e;
      const v = gamma * e;
      const inv = 1 / (u * u + v * v);
      out.re[i] += a * u * inv;
      out.im[i] += a * v * inv;
      if (out.dRe && out.dIm) {
        const inv2 = inv * inv;
        const dRedU = (v * v - u * u) * inv2;
        const dRedV = -2 * u * v * inv2; // = ∂(v/D)/∂u as well
        out.dRe[3 * t][i] = u * inv;
        out.dIm[3 * t][i] = v * inv;
        out.dRe[3 * t + 1][i] = a * 2 * e0 * dRedU;
        out.dIm[3 * t + 1][i] = a * 2 * e0 * dRedV;
        out.dRe[3 * t + 2][i] = a * e * dRedV;
        out.dIm[3 * t + 2][i] = -a * e * dRedU;
      }
    }
  }
}

export const lorentz: ModelTerm = {
  name: 'lorentz',
  summary: 'ε = ε∞ + Σ Aⱼ/(E0ⱼ² − E² − iΓⱼE); Aⱼ in eV², E0ⱼ and Γⱼ in eV',
  quantity: 'eps',
  summable: true,
  usesEpsInf: true,
  kkConsistent: true,
  absorbing: () => true,
  oscillators: (options) => Array.from({ length: options.terms }, (_, j) => ({ strength: 3 * j, position: 3 * j + 1 })),
  validity: [
    'Lorentz oscillators suit isolated absorption bands (phonons, excitons, dyes); their absorption tails are slower than a real band edge.',
  ],
  terms: { min: 1, max: 6, meaning: 'number of Lorentz oscillators' },
  parameters,
  guess,
  amplitudes: (options): Amplitude[] => Array.from({ length: options.terms }, (_, t) => ({ index: 3 * t, power: 1 })),
  evaluate,
};
