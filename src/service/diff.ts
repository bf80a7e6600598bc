/**
 * What changed between two versions: model parameters (Δ and Δ in combined standard errors), the
 * largest |Δn| and |Δk| over the wavelength range both cover and where, and provenance fields.
 */
import type { Registry } from '../registry/open.ts';
import { provenanceOf, usableRangeNm, verifiedContentOf } from '../registry/records.ts';
import { PROVENANCE_FIELDS, type Provenance, type VersionContent, type VersionStatus } from '../registry/types.ts';
import { evaluateContent } from './evaluate-version.ts';
import { resolveRow } from './versions.ts';

/** Points of the uniform part of the comparison grid (the measured wavelengths of both tables are added). */
export const DIFF_GRID_POINTS = 401;

export interface ParameterChange {
  name: string;
  unit: string | null;
  /** Null when the parameter exists in only one of the two models. */
  a: number | null;
  b: number | null;
  delta: number | null;
  /** Δ divided by the combined standard error √(σa² + σb²), when both are known. */
  delta_sigmas: number | null;
}

export interface LargestDifference {
  /** max |Δ| over the common range (b − a). */
  max_abs: number;
  at_nm: number;
  rms: number;
}

export interface VersionDiff {
  a: { ref: string; sha256: string; status: VersionStatus; model: string | null; range_nm: [number, number] };
  b: { ref: string; sha256: string; status: VersionStatus; model: string | null; range_nm: [number, number] };
  identical_content: boolean;
  model_changed: boolean;
  parameters: ParameterChange[];
  /** Null when the two versions cover no common wavelength range. */
  common_range_nm: [number, number] | null;
  dn: LargestDifference | null;
  dk: LargestDifference | null;
  provenance: { field: keyof Provenance; a: unknown; b: unknown }[];
  /** n and k of both on the comparison grid (for plots). */
  curves: { wavelength_nm: number[]; n_a: number[]; n_b: number[]; k_a: number[]; k_b: number[] } | null;
  notices: string[];
  warnings: string[];
}

function parameterChanges(a: VersionContent, b: VersionContent): ParameterChange[] {
  const pa = a.fit?.parameters ?? {};
  const pb = b.fit?.parameters ?? {};
  const names = [...new Set([...Object.keys(pa), ...Object.keys(pb)])];
  return names.map((name) => {
    const x = pa[name];
    const y = pb[name];
    const delta = x && y ? y.value - x.value : null;
    const sigma = x && y && typeof x.stderr === 'number' && typeof y.stderr === 'number' ? Math.hypot(x.stderr, y.stderr) : null;
    return {
      name,
      unit: (x ?? y).unit ?? null,
      a: x ? x.value : null,
      b: y ? y.value : null,
      delta,
      delta_sigmas: delta !== null && sigma !== null && sigma > 0 ? delta / sigma : null,
    };
  });
}

function comparisonGrid(a: VersionContent, b: VersionContent, [lo, hi]: [number, number]): number[] {
  const points = new Set<number>();
  for (let i = 0; i < DIFF_GRID_POINTS; i++) points.add(i === DIFF_GRID_POINTS - 1 ? hi : lo + ((hi - lo) * i) / (DIFF_GRID_POINTS - 1));
  for (const table of [a.table, b.table]) for (const w of table?.wavelengthNm ?? []) if (w >= lo && w <= hi) points.add(w);
  return [...points].sort((x, y) => x - y);
}

function largest(x: number[], ya: number[], yb: number[]): LargestDifference {
  let at = 0;
  let sumSq = 0;
  for (let i = 0; i < x.length; i++) {
    const d = Math.abs(yb[i] - ya[i]);
    sumSq += d * d;
    if (d > Math.abs(yb[at] - ya[at])) at = i;
  }
  return { max_abs: Math.abs(yb[at] - ya[at]), at_nm: x[at], rms: Math.sqrt(sumSq / x.length) };
}

export async function diffVersions(registry: Registry, refA: string, refB: string): Promise<VersionDiff> {
  const A = await resolveRow(registry, refA);
  const B = await resolveRow(registry, refB);

  const ca = verifiedContentOf(A.row, A.resolved.ref);
  const cb = verifiedContentOf(B.row, B.resolved.ref);
  const ra = usableRangeNm(ca);
  const rb = usableRangeNm(cb);
  const lo = Math.max(ra[0], rb[0]);
  const hi = Math.min(ra[1], rb[1]);
  const common: [number, number] | null = lo < hi ? [lo, hi] : null;
  let curves: VersionDiff['curves'] = null;
  if (common) {
    const grid = comparisonGrid(ca, cb, common);
    const ea = evaluateContent(ca, grid, 'linear', A.resolved.ref);
    const eb = evaluateContent(cb, grid, 'linear', B.resolved.ref);
    curves = { wavelength_nm: grid, n_a: ea.n, n_b: eb.n, k_a: ea.k, k_b: eb.k };
  }
  const pa = provenanceOf(A.row);
  const pb = provenanceOf(B.row);
  const side = (r: typeof A, c: VersionContent, range: [number, number]) => ({
    ref: r.resolved.ref,
    sha256: r.resolved.sha256,
    status: r.resolved.status,
    model: c.fit?.model ?? null,
    range_nm: range,
  });
  return {
    a: side(A, ca, ra),
    b: side(B, cb, rb),
    identical_content: A.row.content === B.row.content,
    model_changed: (ca.fit?.model ?? null) !== (cb.fit?.model ?? null),
    parameters: parameterChanges(ca, cb),
    common_range_nm: common,
    dn: curves ? largest(curves.wavelength_nm, curves.n_a, curves.n_b) : null,
    dk: curves ? largest(curves.wavelength_nm, curves.k_a, curves.k_b) : null,
    provenance: PROVENANCE_FIELDS.filter((f) => JSON.stringify(pa[f]) !== JSON.stringify(pb[f])).map((field) => ({
      field,
      a: pa[field],
      b: pb[field],
    })),
    curves,
    notices: [...A.resolved.notices, ...B.resolved.notices],
    warnings: [...A.resolved.warnings, ...B.resolved.warnings],
  };
}
