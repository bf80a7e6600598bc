/**
 * Kramers-Kronig consistency of a tabulated n,k: is this n what this k (plus absorption outside the
 * window) implies? Fits the KK-consistent representation of represent.ts to the measured ε1, ε2 and
 * reports the misfit in n. Pure: no I/O. Method and its sources: DEVELOPERS.md, "Kramers-Kronig check".
 */
import { InputError } from '../errors.ts';
import { epsFromNk, nkFromEps } from '../optics/permittivity.ts';
import { photonEnergyEvFromWavelengthNm } from '../optics/units.ts';
import type { NkTable } from '../table.ts';
import { fitKkRepresentation } from './represent.ts';
import { SPECTRAL_BANDS, argMaxAbs, differenceNoise, movingAverage, rms } from './residuals.ts';
import { maxOf } from '../optics/extremes.ts';

export type KkVerdict = 'consistent' | 'inconsistent' | 'uninformative';

export interface KkOptions {
  /** Largest acceptable systematic |Δn| (default 0.005). */
  tolerance?: number;
  /** k below this everywhere makes the check uninformative (default: the tolerance). */
  kNegligible?: number;
  /** Knot intervals across the window (default: points / 2.5, between 8 and 120). */
  intervals?: number;
  /** Relative second-difference penalty on ε2 (default 0: none needed with the data weighting used). */
  smoothing?: number;
  /** How much more ε2 is trusted than ε1 (ratio of weights, default 4). */
  eps2Weight?: number;
}

export const KK_DEFAULTS = { tolerance: 0.005, eps2Weight: 4, smoothing: 0, maxIntervals: 120, minIntervals: 8 } as const;

/** Above this many σ/√m a smoothed misfit is not noise (max of ~100 Gaussian window means stays below ~3.5σ). */
const NOISE_ALLOWANCE_SIGMAS = 4;
/** Half-width, in knot spacings, of the window over which the local swing of the averaged Δn is taken. */
const SWING_SPACINGS = 3;

/**
 * max − min of `values` over the points within ±halfWidthEv of each point (energies in any order), by
 * sliding-window maximum and minimum with monotonic deques: O(N) however many points a window holds.
 */
function localSwing(energyEv: ArrayLike<number>, values: ArrayLike<number>, halfWidthEv: number): number[] {
  const total = values.length;
  const order = Array.from({ length: total }, (_, i) => i).sort((a, b) => energyEv[a] - energyEv[b]);
  const e = order.map((i) => energyEv[i]);
  const v = order.map((i) => values[i]);
  const out: number[] = new Array(total).fill(0);
  const maxQ = new Int32Array(total);
  const minQ = new Int32Array(total);
  let maxHead = 0;
  let maxTail = 0;
  let minHead = 0;
  let minTail = 0;
  let hi = 0;
  for (let r = 0; r < total; r++) {
    while (hi < total && e[hi] <= e[r] + halfWidthEv) {
      while (maxTail > maxHead && v[maxQ[maxTail - 1]] <= v[hi]) maxTail--;
      maxQ[maxTail++] = hi;
      while (minTail > minHead && v[minQ[minTail - 1]] >= v[hi]) minTail--;
      minQ[minTail++] = hi;
      hi++;
    }
    while (e[maxQ[maxHead]] < e[r] - halfWidthEv) maxHead++;
    while (e[minQ[minHead]] < e[r] - halfWidthEv) minHead++;
    out[order[r]] = v[maxQ[maxHead]] - v[minQ[minHead]];
  }
  return out;
}

export interface KkBandReport {
  band: string;
  range_nm: [number, number];
  points: number;
  rms_dn: number;
  max_dn: number;
  worst_nm: number;
  systematic_max_dn: number;
}

export interface KkReport {
  verdict: KkVerdict;
  /** One sentence a person reads first. */
  summary: string;
  tolerance: number;
  /** RMS and max |Δn| over all points, Δn = n_measured − n_reconstructed; worst_nm is where |Δn| peaks. */
  rms_dn: number;
  max_dn: number;
  worst_nm: number;
  /** Δn averaged over ±one knot spacing (noise removed), its max, where, and the point-to-point noise of Δn. */
  systematic_max_dn: number;
  systematic_worst_nm: number;
  /**
   * Largest local swing of the averaged Δn (max − min within ±SWING_SPACINGS knot spacings) and where: a
   * step in n leaves a causal fit ±half the step on either side, so the swing, not the level, shows it.
   */
  systematic_swing_dn: number;
  systematic_swing_nm: number;
  noise_dn: number;
  /** How far ε2 (and k) had to move to be explained together with ε1. */
  rms_deps2: number;
  max_deps2: number;
  max_deps2_nm: number;
  max_dk: number;
  max_k: number;
  eps_inf: number;
  points: number;
  range_nm: [number, number];
  bands: KkBandReport[];
  /** On the table's grid, for plotting. */
  reconstructed: { wavelength_nm: number[]; n_measured: number[]; n: number[]; k: number[]; dn: number[] };
  method: {
    name: string;
    sources: string[];
    intervals: number;
    knot_spacing_ev: number;
    basis_functions: number;
    eps2_weight: number;
    smoothing: number;
    knots_ev: [number, number];
  };
  notes: string[];
}

function checkedOption(name: string, value: number | undefined, fallback: number, min: number): number {
  if (value === undefined) return fallback;
  if (!Number.isFinite(value) || value < min) {
    throw new InputError('kk-option', `${name} must be a number ≥ ${min}, got ${value}`);
  }
  return value;
}

function validateTable(table: NkTable): void {
  const count = table.wavelengthNm.length;
  if (count < 8) throw new InputError('kk-too-few-points', `the Kramers-Kronig check needs at least 8 rows, the table has ${count}`);
  for (let i = 0; i < count; i++) {
    const [wl, n, k] = [table.wavelengthNm[i], table.n[i], table.k[i]];
    if (!(wl > 0) || !Number.isFinite(n) || !Number.isFinite(k)) {
      throw new InputError('kk-bad-value', `row ${i + 1}: wavelength ${wl} nm, n ${n}, k ${k} is not a usable value`);
    }
    if (k < 0) throw new InputError('kk-negative-k', `row ${i + 1} (${wl} nm): k = ${k} < 0; a passive material absorbs (k ≥ 0)`);
  }
}

export function checkKramersKronig(table: NkTable, options: KkOptions = {}): KkReport {
  validateTable(table);
  const count = table.wavelengthNm.length;
  const tolerance = checkedOption('tolerance', options.tolerance, KK_DEFAULTS.tolerance, 1e-9);
  const kNegligible = checkedOption('kNegligible', options.kNegligible, tolerance, 0);
  const eps2Weight = checkedOption('eps2Weight', options.eps2Weight, KK_DEFAULTS.eps2Weight, 1e-6);
  const smoothing = checkedOption('smoothing', options.smoothing, KK_DEFAULTS.smoothing, 0);
  const autoIntervals = Math.min(KK_DEFAULTS.maxIntervals, Math.max(KK_DEFAULTS.minIntervals, Math.round(count / 2.5)));
  const intervals = Math.round(checkedOption('intervals', options.intervals, autoIntervals, 2));

  const energyEv = table.wavelengthNm.map(photonEnergyEvFromWavelengthNm);
  const eps1: number[] = [];
  const eps2: number[] = [];
  const weight1: number[] = [];
  const weight2: number[] = [];
  table.n.forEach((n, i) => {
    const k = table.k[i];
    const eps = epsFromNk(n, k);
    eps1.push(eps.eps1);
    eps2.push(eps.eps2);
    // σ(ε1) = 2√(n²σn² + k²σk²), σ(ε2) = 2√(k²σn² + n²σk²) (propagation of ε = N²); σn = σk = 1 when not given.
    const sn = table.sigmaN?.[i] || 1;
    const sk = table.sigmaK?.[i] || 1;
    weight1.push(1 / (2 * Math.hypot(n * sn, k * sk) || 1));
    weight2.push(eps2Weight / (2 * Math.hypot(k * sn, n * sk) || 1));
  });
  const fit = fitKkRepresentation({ energyEv, eps1, eps2, weight1, weight2 }, { intervals, smoothing });

  const nRec: number[] = [];
  const kRec: number[] = [];
  fit.eps1.forEach((e1, i) => {
    const nk = nkFromEps(e1, fit.eps2[i]);
    nRec.push(nk.n);
    kRec.push(nk.k);
  });
  const dn = table.n.map((n, i) => n - nRec[i]);
  const dk = table.k.map((k, i) => k - kRec[i]);
  const deps2 = eps2.map((e2, i) => e2 - fit.eps2[i]);

  const noise = differenceNoise(dn);
  const smoothed = movingAverage(energyEv, dn, fit.basis.spacingEv);
  const beyondNoise = smoothed.mean.map((m, i) => Math.abs(m) - (NOISE_ALLOWANCE_SIGMAS * noise) / Math.sqrt(smoothed.count[i]));
  const swing = localSwing(energyEv, smoothed.mean, SWING_SPACINGS * fit.basis.spacingEv);
  const swingBeyondNoise = swing.map((s, i) => s - (2 * NOISE_ALLOWANCE_SIGMAS * noise) / Math.sqrt(smoothed.count[i]));
  const flagged = beyondNoise.some((excess) => excess > tolerance) || swingBeyondNoise.some((excess) => excess > tolerance);
  const swingWorst = argMaxAbs(swing);
  const worst = argMaxAbs(dn);
  const sysWorst = argMaxAbs(smoothed.mean);
  const maxK = maxOf(table.k);
  const verdict: KkVerdict = flagged ? 'inconsistent' : maxK < kNegligible ? 'uninformative' : 'consistent';

  const wl = table.wavelengthNm;
  const bands: KkBandReport[] = [];
  for (const band of SPECTRAL_BANDS) {
    const idx = wl.map((w, i) => i).filter((i) => wl[i] >= band.fromNm && wl[i] < band.toNm);
    if (idx.length === 0) continue;
    const bandDn = idx.map((i) => dn[i]);
    const w = idx[argMaxAbs(bandDn)];
    bands.push({
      band: band.band,
      range_nm: [wl[idx[0]], wl[idx[idx.length - 1]]],
      points: idx.length,
      rms_dn: rms(bandDn),
      max_dn: Math.abs(dn[w]),
      worst_nm: wl[w],
      systematic_max_dn: maxOf(idx.map((i) => Math.abs(smoothed.mean[i]))),
    });
  }

  const report: KkReport = {
    verdict,
    summary: '',
    tolerance,
    rms_dn: rms(dn),
    max_dn: Math.abs(dn[worst]),
    worst_nm: wl[worst],
    systematic_max_dn: Math.abs(smoothed.mean[sysWorst]),
    systematic_worst_nm: wl[sysWorst],
    systematic_swing_dn: swing[swingWorst],
    systematic_swing_nm: wl[swingWorst],
    noise_dn: noise,
    rms_deps2: rms(deps2),
    max_deps2: Math.abs(deps2[argMaxAbs(deps2)]),
    max_deps2_nm: wl[argMaxAbs(deps2)],
    max_dk: Math.abs(dk[argMaxAbs(dk)]),
    max_k: maxK,
    eps_inf: fit.epsInf,
    points: count,
    range_nm: [wl[0], wl[count - 1]],
    bands,
    reconstructed: { wavelength_nm: [...wl], n_measured: [...table.n], n: nRec, k: kRec, dn },
    method: {
      name: 'fit of a KK-consistent ε (non-negative triangle ε2 basis on knots beyond the window, two loss-free poles, ε∞) to measured ε1 and ε2',
      sources: [
        'B. Johs and J. S. Hale, phys. stat. sol. (a) 205, 715 (2008)',
        'C. L. Lawson and R. J. Hanson, Solving Least Squares Problems, Prentice-Hall 1974, ch. 23 (NNLS)',
        'V. Lucarini et al., Kramers-Kronig Relations in Optical Materials Research, Springer 2005',
      ],
      intervals,
      knot_spacing_ev: fit.basis.spacingEv,
      basis_functions: fit.basis.columnCount,
      eps2_weight: eps2Weight,
      smoothing,
      knots_ev: [fit.basis.knotsEv[0], fit.basis.knotsEv[fit.basis.knotsEv.length - 1]],
    },
    notes: [],
  };
  report.summary = summarize(report, kNegligible);
  report.notes = notesFor(report, kNegligible);
  return report;
}

const fmt = (v: number) => v.toExponential(1);

function summarize(r: KkReport, kNegligible: number): string {
  if (r.verdict === 'inconsistent') {
    const swing = r.systematic_swing_dn > r.systematic_max_dn;
    return swing
      ? `n is not what k implies: the systematic misfit in n swings by ${fmt(r.systematic_swing_dn)} near ${r.systematic_swing_nm.toFixed(1)} nm (a step or wiggle that no causal ε explains), above the tolerance ${r.tolerance} plus the noise allowance.`
      : `n is not what k implies: the systematic misfit reaches ${fmt(r.systematic_max_dn)} in n near ${r.systematic_worst_nm.toFixed(1)} nm, above the tolerance ${r.tolerance} plus the noise allowance.`;
  }
  if (r.verdict === 'uninformative') {
    return `k stays below ${kNegligible} everywhere (max ${fmt(r.max_k)}): with no absorption inside the window, any n that rises smoothly with photon energy is consistent with absorption outside it, so this check cannot confirm or refute n.`;
  }
  return `n and k agree: the systematic misfit in n stays within ${fmt(r.systematic_max_dn)} (tolerance ${r.tolerance}).`;
}

function notesFor(r: KkReport, kNegligible: number): string[] {
  const notes = [
    'The window is finite: absorption outside it is fitted, not assumed, so it is never reported as an error; misfits within about one knot spacing of either end are weak evidence.',
  ];
  if (r.noise_dn > r.tolerance / 4) {
    notes.push(`The data scatter by about ${fmt(r.noise_dn)} in n from point to point; misfits are judged after averaging over one knot spacing.`);
  }
  if (r.verdict === 'inconsistent' && r.max_k < kNegligible) {
    notes.push('k is negligible here, yet n does not follow: a transparent region needs n rising smoothly with photon energy (normal dispersion).');
  }
  if (r.max_dk > r.tolerance) {
    notes.push(
      `k had to move by up to ${fmt(r.max_dk)} (ε2 by ${fmt(r.max_deps2)} at ${r.max_deps2_nm.toFixed(1)} nm) to be explained together with n.`,
    );
  }
  return notes;
}
