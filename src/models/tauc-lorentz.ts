/**
 * Tauc-Lorentz: G. E. Jellison Jr. and F. A. Modine, Appl. Phys. Lett. 69, 371 (1996); erratum 69, 2137
 * (1996). For E > Eg
 *   ε2(E) = A·E0·C·(E − Eg)² / [((E² − E0²)² + C²E²)·E],  ε2 = 0 for E ≤ Eg,
 * and ε1 = ε∞ + (2/π)·P∫ ξε2(ξ)/(ξ² − E²) dξ in the paper's closed form (see `oscillatorEps1`), checked
 * in test/models against scipy's principal-value quadrature (test/reference/tauc-lorentz-kk.json).
 * Several oscillators share one Eg (the material's gap). With one oscillator the parameters are A, E0, C,
 * Eg; with N they are A1, E01, C1, …, AN, E0N, CN and the shared Eg.
 * Partial derivatives are analytic in E; the few scalars that depend on the parameters only
 * (logarithms and arctangents of E0, C, Eg) are differentiated by central differences, which costs
 * O(1) per evaluation instead of O(points).
 */
import { clamp, halfWidth, oscillatorName, peakIndices } from './grid.ts';
import type { Amplitude, GuessData, ModelTerm, ParameterSpec, SpectralGrid, TermOptions, TermOutput } from './types.ts';
import { maxOf, minOf } from '../optics/extremes.ts';

const A_BOUNDS: [number, number] = [0, 2000];
const E0_BOUNDS: [number, number] = [0.5, 20];
const C_BOUNDS: [number, number] = [0.05, 20];
const EG_BOUNDS: [number, number] = [0.05, 12];

function parameters(options: TermOptions): ParameterSpec[] {
  const list: ParameterSpec[] = [];
  for (let j = 1; j <= options.terms; j++) {
    const which = options.terms > 1 ? ` of oscillator ${j}` : '';
    list.push(
      {
        name: oscillatorName('A', j, options.terms),
        unit: 'eV',
        meaning: `amplitude${which}`,
        bounds: A_BOUNDS,
        guessRule: 'linear least squares of ε on all amplitudes with the other parameters at their guesses',
      },
      {
        name: oscillatorName('E0', j, options.terms),
        unit: 'eV',
        meaning: `peak transition energy${which}`,
        bounds: E0_BOUNDS,
        guessRule: 'energy of the ε2 maximum; 1 eV above the fitted range when ε2 still rises there',
      },
      {
        name: oscillatorName('C', j, options.terms),
        unit: 'eV',
        meaning: `broadening${which} (must stay below 2·E0)`,
        bounds: C_BOUNDS,
        guessRule: 'full width at half maximum of the ε2 peak, else 2 eV',
      },
    );
  }
  list.push({
    name: 'Eg',
    unit: 'eV',
    meaning: 'optical band gap (shared by all oscillators)',
    bounds: EG_BOUNDS,
    guessRule: 'Tauc-plot extrapolation: straight line through √ε2 against E on the rising edge, to zero',
  });
  return list;
}

const SCALAR_COUNT = 6;

/**
 * The parameter-only factors of the closed form (everything except A and E):
 * s1 = C·L/(2αE0) with L = ln[(E0² + Eg² + αEg)/(E0² + Eg² − αEg)], s2 = T/E0 with
 * T = π − atan((2Eg + α)/C) + atan((α − 2Eg)/C), s3 = 2E0·Eg·T3/α with T3 = π + 2atan(2(γ² − Eg²)/(αC)),
 * s4 = E0·C, s5 = 2E0·C·Eg, lnS = ln√((E0² − Eg²)² + Eg²C²); α = √(4E0² − C²), γ² = E0² − C²/2.
 */
function closedFormScalars(e0: number, c: number, eg: number, into: Float64Array, at: number): void {
  const alpha = Math.sqrt(4 * e0 * e0 - c * c);
  const gamma2 = e0 * e0 - (c * c) / 2;
  const sum = e0 * e0 + eg * eg;
  into[at] = (c * Math.log((sum + alpha * eg) / (sum - alpha * eg))) / (2 * alpha * e0);
  into[at + 1] = (Math.PI - Math.atan((2 * eg + alpha) / c) + Math.atan((alpha - 2 * eg) / c)) / e0;
  into[at + 2] = (2 * e0 * eg * (Math.PI + 2 * Math.atan((2 * (gamma2 - eg * eg)) / (alpha * c)))) / alpha;
  into[at + 3] = e0 * c;
  into[at + 4] = 2 * e0 * c * eg;
  into[at + 5] = 0.5 * Math.log((e0 * e0 - eg * eg) ** 2 + eg * eg * c * c);
}

/** Scalars and their central-difference derivatives: [value, ∂/∂E0, ∂/∂C, ∂/∂Eg] blocks of SCALAR_COUNT. */
function scalarsWithDerivatives(e0: number, c: number, eg: number): Float64Array {
  const out = new Float64Array(4 * SCALAR_COUNT);
  const tmp = new Float64Array(2 * SCALAR_COUNT);
  closedFormScalars(e0, c, eg, out, 0);
  const base = [e0, c, eg];
  for (let q = 0; q < 3; q++) {
    const h = 1e-6 * Math.max(Math.abs(base[q]), 1e-3);
    const plus = base.slice();
    const minus = base.slice();
    plus[q] += h;
    minus[q] -= h;
    closedFormScalars(plus[0], plus[1], plus[2], tmp, 0);
    closedFormScalars(minus[0], minus[1], minus[2], tmp, SCALAR_COUNT);
    for (let s = 0; s < SCALAR_COUNT; s++) {
      // next to the edge C = 2·E0 one side may be undefined: fall back to a one-sided difference
      const up = Number.isFinite(tmp[s]);
      const down = Number.isFinite(tmp[SCALAR_COUNT + s]);
      out[(q + 1) * SCALAR_COUNT + s] =
        up && down ? (tmp[s] - tmp[SCALAR_COUNT + s]) / (2 * h) : up ? (tmp[s] - out[s]) / h : (out[s] - tmp[SCALAR_COUNT + s]) / h;
    }
  }
  return out;
}

/**
 * Adds one oscillator's ε1 − ε∞ and ε2 to out; with derivative arrays, writes ∂/∂A, ∂/∂E0, ∂/∂C into
 * slots jA, jA+1, jA+2 and ADDS ∂/∂Eg into slot jEg (Eg is shared).
 */
function addOscillator(grid: SpectralGrid, a: number, e0: number, c: number, eg: number, out: TermOutput, jA: number, jEg: number): void {
  const sc = scalarsWithDerivatives(e0, c, eg);
  const [s1, s2, s3, s4, s5, lnS] = sc;
  const alpha2 = 4 * e0 * e0 - c * c;
  const gamma2 = e0 * e0 - (c * c) / 2;
  const wantD = out.dRe !== undefined && out.dIm !== undefined;
  for (let i = 0; i < grid.energyEv.length; i++) {
    let e = grid.energyEv[i];
    // at E = Eg exactly the two logarithms cancel analytically; step off the removable singularity
    if (Math.abs(e - eg) < 1e-9 * eg) e = eg * (1 + 1e-9);
    const e2 = e * e;
    const x = e2 - gamma2;
    const zeta4 = x * x + (alpha2 * c * c) / 4;
    const aLn = (eg * eg - e0 * e0) * e2 + eg * eg * c * c - e0 * e0 * (e0 * e0 + 3 * eg * eg);
    const aAtan = (e2 - e0 * e0) * (e0 * e0 + eg * eg) + eg * eg * c * c;
    const lnAbs = Math.log(Math.abs(e - eg));
    const lnPlus = Math.log(e + eg);
    const lnA = lnAbs - lnPlus;
    const lnB = lnAbs + lnPlus - lnS;
    const w = (e2 + eg * eg) / e;
    const q = aLn * s1 - aAtan * s2 + x * s3 - s4 * w * lnA + s5 * lnB;
    const eps1 = (a * q) / (Math.PI * zeta4);
    const above = e > eg;
    const d = (e2 - e0 * e0) ** 2 + c * c * e2;
    const eps2 = above ? (a * e0 * c * (e - eg) ** 2) / (d * e) : 0;
    out.re[i] += eps1;
    out.im[i] += eps2;
    if (!wantD) continue;
    const dRe = out.dRe as Float64Array[];
    const dIm = out.dIm as Float64Array[];
    dRe[jA][i] = q / (Math.PI * zeta4);
    dIm[jA][i] = above ? (e0 * c * (e - eg) ** 2) / (d * e) : 0;
    for (let p = 0; p < 3; p++) {
      // p = 0: E0, 1: C, 2: Eg
      const o = (p + 1) * SCALAR_COUNT;
      const dGamma2 = p === 0 ? 2 * e0 : p === 1 ? -c : 0;
      const dAlpha2 = p === 0 ? 8 * e0 : p === 1 ? -2 * c : 0;
      const dC = p === 1 ? 1 : 0;
      const dx = -dGamma2;
      const dZeta4 = 2 * x * dx + (dAlpha2 * c * c + alpha2 * 2 * c * dC) / 4;
      const daLn =
        p === 0 ? -2 * e0 * e2 - 4 * e0 ** 3 - 6 * e0 * eg * eg : p === 1 ? 2 * eg * eg * c : 2 * eg * e2 + 2 * eg * c * c - 6 * e0 * e0 * eg;
      const daAtan =
        p === 0 ? -2 * e0 * (e0 * e0 + eg * eg) + 2 * e0 * (e2 - e0 * e0) : p === 1 ? 2 * eg * eg * c : 2 * eg * (e2 - e0 * e0) + 2 * eg * c * c;
      const dW = p === 2 ? (2 * eg) / e : 0;
      const dLnA = p === 2 ? -1 / (e - eg) - 1 / (e + eg) : 0;
      const dLnB = (p === 2 ? -1 / (e - eg) + 1 / (e + eg) : 0) - sc[o + 5];
      const dq =
        daLn * s1 +
        aLn * sc[o] -
        daAtan * s2 -
        aAtan * sc[o + 1] +
        dx * s3 +
        x * sc[o + 2] -
        (sc[o + 3] * w * lnA + s4 * dW * lnA + s4 * w * dLnA) +
        sc[o + 4] * lnB +
        s5 * dLnB;
      const dEps1 = (a / Math.PI) * (dq / zeta4 - (q * dZeta4) / (zeta4 * zeta4));
      // ε2: ∂/∂E0 = ε2/E0 + ε2·4E0(E² − E0²)/D, ∂/∂C = ε2/C − ε2·2CE²/D, ∂/∂Eg = −2ε2/(E − Eg)
      let dEps2 = 0;
      if (above) {
        if (p === 0) dEps2 = eps2 / e0 + (eps2 * 4 * e0 * (e2 - e0 * e0)) / d;
        else if (p === 1) dEps2 = eps2 / c - (eps2 * 2 * c * e2) / d;
        else dEps2 = (-2 * eps2) / (e - eg);
      }
      if (p < 2) {
        dRe[jA + 1 + p][i] = dEps1;
        dIm[jA + 1 + p][i] = dEps2;
      } else {
        dRe[jEg][i] += dEps1;
        dIm[jEg][i] += dEps2;
      }
    }
  }
}

function evaluate(grid: SpectralGrid, p: Float64Array, options: TermOptions, out: TermOutput): void {
  const jEg = 3 * options.terms;
  if (out.dRe && out.dIm) {
    out.dRe[jEg].fill(0);
    out.dIm[jEg].fill(0);
  }
  for (let t = 0; t < options.terms; t++) addOscillator(grid, p[3 * t], p[3 * t + 1], p[3 * t + 2], p[jEg], out, 3 * t, jEg);
}

/** Eg by a Tauc plot: the line through √ε2 against E on the rising edge (2–30 % of the peak) hits zero at Eg. */
function guessGapEv(data: GuessData, peakEnergy: number, eps2Max: number): number {
  const edge = Array.from(data.energyEv.keys()).filter((i) => {
    const r = data.eps2[i] / eps2Max;
    return data.energyEv[i] < peakEnergy && r > 0.02 && r < 0.3;
  });
  if (edge.length >= 3) {
    const e = edge.map((i) => data.energyEv[i]);
    const [b, slope] = data.leastSquares(
      [e.map(() => 1), e],
      edge.map((i) => Math.sqrt(data.eps2[i])),
    );
    if (slope > 0) return -b / slope;
  }
  const first = Array.from(data.energyEv.keys())
    .filter((i) => data.eps2[i] > 0.05 * eps2Max)
    .reduce((lo, i) => Math.min(lo, data.energyEv[i]), Infinity);
  return Number.isFinite(first) ? first - 0.2 : 0.8 * minOf(data.energyEv);
}

/**
 * The interband part of the data: rows above the energy of minimum ε2 (below it, free-carrier or
 * other low-energy absorption of a summed term dominates), with that minimum subtracted as a baseline.
 */
function interbandPart(data: GuessData): GuessData {
  let low = 0;
  for (let i = 1; i < data.eps2.length; i++) if (data.eps2[i] < data.eps2[low]) low = i;
  const eMin = data.energyEv[low];
  const keep = Array.from(data.energyEv.keys()).filter((i) => data.energyEv[i] >= eMin);
  const pick = (a: Float64Array) => Float64Array.from(keep, (i) => a[i]);
  const eps2 = Float64Array.from(keep, (i) => data.eps2[i] - data.eps2[low]);
  return {
    ...data,
    wavelengthNm: pick(data.wavelengthNm),
    wavelengthUm: pick(data.wavelengthUm),
    energyEv: pick(data.energyEv),
    n: pick(data.n),
    k: pick(data.k),
    eps1: pick(data.eps1),
    eps2,
  };
}

function guess(all: GuessData, options: TermOptions): number[] {
  const data = interbandPart(all);
  const eMax = maxOf(data.energyEv);
  const eps2Max = maxOf(data.eps2);
  const values: number[] = [];
  let eg: number;
  if (!(eps2Max > 1e-3)) {
    // transparent over the whole range: gap and oscillators above the data
    eg = eMax + 0.5;
    for (let j = 0; j < options.terms; j++) values.push(50, eg + 3 + 2 * j, 2);
  } else {
    const peaks = peakIndices(data.eps2).filter((i) => i > 0 && i < data.energyEv.length - 1);
    const main = peaks.length > 0 ? peaks[0] : data.eps2.indexOf(eps2Max);
    const interior = peaks.length > 0;
    const e0 = interior ? data.energyEv[main] : eMax + 1;
    eg = Math.min(guessGapEv(data, interior ? e0 : eMax, eps2Max), e0 - 0.3);
    const width = interior ? halfWidth(data.energyEv, data.eps2, main, 2) : 2;
    for (let j = 0; j < options.terms; j++) {
      const e0j = j === 0 ? e0 : Math.max(e0, eMax) + 1.5 * j;
      const cj = clamp(j === 0 ? width : 2, [0.3, 1.8 * e0j]);
      values.push(50, clamp(e0j, E0_BOUNDS), cj);
    }
  }
  values.push(clamp(eg, EG_BOUNDS));
  return values;
}

export const taucLorentz: ModelTerm = {
  name: 'tauc-lorentz',
  summary: 'Jellison-Modine 1996: Tauc gap times Lorentz oscillator in ε2, ε1 by Kramers-Kronig (closed form); A, E0, C, Eg in eV',
  quantity: 'eps',
  summable: true,
  usesEpsInf: true,
  kkConsistent: true,
  absorbing: () => true,
  oscillators: (options) => Array.from({ length: options.terms }, (_, j) => ({ strength: 3 * j, position: 3 * j + 1 })),
  // C < 2·E0 for every oscillator (α = √(4E0² − C²) in the closed form); parameters A, E0, C per oscillator
  constraints: (options) => Array.from({ length: options.terms }, (_, t) => ({ below: 3 * t + 2, above: 3 * t + 1, factor: 2 })),
  validity: [
    'Tauc-Lorentz suits amorphous semiconductors and dielectrics near and above the gap; ε2 = 0 below Eg, so sub-gap (Urbach, defect) absorption is not described.',
  ],
  terms: { min: 1, max: 4, meaning: 'number of Tauc-Lorentz oscillators (all share Eg)' },
  parameters,
  guess,
  amplitudes: (options): Amplitude[] => Array.from({ length: options.terms }, (_, t) => ({ index: 3 * t, power: 1 })),
  evaluate,
};
