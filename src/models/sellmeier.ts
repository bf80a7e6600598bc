/**
 * Sellmeier: n² = A + Σᵢ Bᵢλ²/(λ² − Cᵢ), i = 1…N (λ in µm, Cᵢ in µm², i.e. Cᵢ = λᵢ² of a resonance at
 * λᵢ), A fixed at 1 unless freed. Form of I. H. Malitson, J. Opt. Soc. Am. 55, 1205 (1965).
 * Real ε only: for the transparent region between the UV and IR resonances. Each term is the
 * zero-damping limit of a Lorentz oscillator, so within its validity range it is Kramers-Kronig
 * consistent (k = 0 there).
 */
import { clamp } from './grid.ts';
import type { GuessData, ModelTerm, ParameterSpec, SpectralGrid, TermOptions, TermOutput } from './types.ts';

const A_SPEC: ParameterSpec = {
  name: 'A',
  unit: '1',
  meaning: 'constant term of n² (1 = vacuum background)',
  bounds: [0.5, 20],
  guessRule: '1 (held fixed unless the fit is asked to free A)',
  fixedByDefault: true,
  defaultValue: 1,
};

function parameters(options: TermOptions): ParameterSpec[] {
  const list = [A_SPEC];
  for (let i = 1; i <= options.terms; i++) {
    list.push(
      {
        name: `B${i}`,
        unit: '1',
        meaning: `strength of resonance ${i}`,
        bounds: [0, 20],
        guessRule: 'linear least squares of n² − A on the λ²/(λ² − Cᵢ) terms',
      },
      {
        name: `C${i}`,
        unit: 'µm²',
        meaning: `square of resonance wavelength ${i}`,
        bounds: [0, 1e4],
        guessRule: 'UV resonances spread over 0.25–0.6 × shortest fitted λ; with N ≥ 2 the last is an IR resonance at max(3 × longest λ, 5 µm)',
      },
    );
  }
  return list;
}

/** Resonance wavelengths (µm) of the guess: UV ones below the data, one IR one above it when N ≥ 2. */
function resonanceWavelengthsUm(minUm: number, maxUm: number, terms: number): number[] {
  const uv = terms >= 2 ? terms - 1 : terms;
  const list = Array.from({ length: uv }, (_, j) => minUm * (uv === 1 ? 0.45 : 0.25 + (0.35 * j) / (uv - 1)));
  if (terms >= 2) list.push(Math.max(3 * maxUm, 5));
  return list;
}

function guess(data: GuessData, options: TermOptions): number[] {
  const um = data.wavelengthUm;
  const c = resonanceWavelengthsUm(um[0], um[um.length - 1], options.terms).map((l) => l * l);
  const columns = c.map((ci) => Array.from(um, (l) => (l * l) / (l * l - ci)));
  const b = data.leastSquares(
    columns,
    Array.from(data.n, (n) => n * n - 1),
  );
  const specs = parameters(options);
  const values = [1];
  c.forEach((ci, j) => values.push(clamp(b[j] > 0 ? b[j] : 1e-3, specs[1 + 2 * j].bounds), ci));
  return values;
}

function evaluate(grid: SpectralGrid, p: Float64Array, options: TermOptions, out: TermOutput): void {
  const count = grid.wavelengthUm.length;
  for (let i = 0; i < count; i++) {
    const l2 = grid.wavelengthUm[i] * grid.wavelengthUm[i];
    let eps1 = p[0];
    if (out.dRe && out.dIm) {
      out.dRe[0][i] = 1;
      out.dIm[0][i] = 0;
    }
    for (let t = 0; t < options.terms; t++) {
      const b = p[1 + 2 * t];
      const denom = 1 / (l2 - p[2 + 2 * t]);
      eps1 += b * l2 * denom;
      if (out.dRe && out.dIm) {
        out.dRe[1 + 2 * t][i] = l2 * denom;
        out.dRe[2 + 2 * t][i] = b * l2 * denom * denom;
        out.dIm[1 + 2 * t][i] = out.dIm[2 + 2 * t][i] = 0;
      }
    }
    out.re[i] += eps1;
  }
}

export const sellmeier: ModelTerm = {
  name: 'sellmeier',
  summary: 'n² = A + Σ Bᵢλ²/(λ² − Cᵢ), λ in µm, Cᵢ in µm², A fixed at 1 unless freed',
  quantity: 'eps',
  summable: false,
  usesEpsInf: false,
  kkConsistent: true,
  absorbing: () => false,
  oscillators: (options) => Array.from({ length: options.terms }, (_, i) => ({ strength: 1 + 2 * i, position: 2 + 2 * i })),
  validity: ['Sellmeier describes the transparent region only (k = 0): do not use it across an absorption band or near a resonance Cᵢ.'],
  terms: { min: 1, max: 4, meaning: 'number of Sellmeier terms (resonances)' },
  parameters,
  guess,
  evaluate,
};
