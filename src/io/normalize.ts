/**
 * From parsed rows to the normalized NkTable: x to nm, ε to n,k, the physical checks (n > 0, k ≥ −tolerance,
 * σ ≥ 0), sorting by wavelength, merging of identical repeats and the warnings a person should see.
 */
import { InputError } from '../errors.ts';
import { nkFromEps } from '../optics/permittivity.ts';
import { toWavelengthNm, type SpectralUnit } from '../optics/units.ts';
import type { NkTable } from '../table.ts';
import { LARGE_GAP_FACTOR, type ColumnRole } from './import-types.ts';

/** One data row as read: its line, the number in each used column and that column's 1-based position. */
export interface ParsedRow {
  line: number;
  values: Partial<Record<ColumnRole, number>>;
}

export interface NormalizeContext {
  file?: string;
  xUnit: SpectralUnit;
  quantity: 'nk' | 'eps';
  /** 1-based column of each role, for messages. */
  columnOf: Partial<Record<ColumnRole, number>>;
  kTolerance: number;
}

interface Point {
  line: number;
  x: number;
  wavelengthNm: number;
  n: number;
  k: number;
  sigmaN?: number;
  sigmaK?: number;
  sigmaEps1?: number;
  sigmaEps2?: number;
  raw: Partial<Record<ColumnRole, number>>;
}

export function normalizeRows(rows: ParsedRow[], ctx: NormalizeContext): { table: NkTable; warnings: string[] } {
  const warnings: string[] = [];
  let clippedK = 0;
  let mostNegativeK = 0;
  const points = rows.map((row): Point => {
    const p = toPoint(row, ctx);
    if (p.k < 0) {
      clippedK++;
      mostNegativeK = Math.min(mostNegativeK, p.k);
      p.k = 0;
    }
    return p;
  });
  if (clippedK > 0) {
    warnings.push(
      `${clippedK} point(s) with small negative k (down to ${mostNegativeK.toPrecision(2)}, within the tolerance ${ctx.kTolerance}) set to 0`,
    );
  }
  const unsortedAt = firstDirectionChange(points);
  if (unsortedAt !== undefined) warnings.push(`x values are not in order (line ${unsortedAt} goes back); rows sorted by wavelength`);

  const sorted = [...points].sort((a, b) => a.wavelengthNm - b.wavelengthNm || a.line - b.line);
  const merged = mergeRepeats(sorted, ctx, warnings);
  if (merged.length < 2) {
    throw new InputError('too-few-rows', `only ${merged.length} distinct data row; a table needs at least two`, {
      file: ctx.file,
      line: merged[0]?.line,
    });
  }
  const gap = largeGaps(merged, ctx.xUnit);
  if (gap) warnings.push(gap);

  const table: NkTable = { wavelengthNm: merged.map((p) => p.wavelengthNm), n: merged.map((p) => p.n), k: merged.map((p) => p.k) };
  if (merged.every((p) => p.sigmaN !== undefined)) table.sigmaN = merged.map((p) => p.sigmaN as number);
  if (merged.every((p) => p.sigmaK !== undefined)) table.sigmaK = merged.map((p) => p.sigmaK as number);
  if (merged.every((p) => p.sigmaEps1 !== undefined && p.sigmaEps2 !== undefined)) {
    table.sigmaEps1 = merged.map((p) => p.sigmaEps1 as number);
    table.sigmaEps2 = merged.map((p) => p.sigmaEps2 as number);
  }
  return { table, warnings };
}

function toPoint(row: ParsedRow, ctx: NormalizeContext): Point {
  const v = row.values;
  const at = (role: ColumnRole) => ({ file: ctx.file, line: row.line, column: ctx.columnOf[role] });
  const x = v.x as number;
  const wavelengthNm = x > 0 ? toWavelengthNm(x, ctx.xUnit) : NaN;
  if (!(wavelengthNm > 0) || !Number.isFinite(wavelengthNm)) {
    throw new InputError('x-not-positive', `x = ${x} ${ctx.xUnit} is not a positive spectral coordinate`, at('x'));
  }
  for (const role of ['sigma_n', 'sigma_k', 'sigma_eps1', 'sigma_eps2'] as const) {
    const s = v[role];
    if (s !== undefined && s < 0) throw new InputError('negative-sigma', `${role} = ${s} is negative; an uncertainty is ≥ 0`, at(role));
  }
  let n: number;
  let k: number;
  let sigmaN = v.sigma_n;
  let sigmaK = v.sigma_k;
  let nRole: ColumnRole = 'n';
  let kRole: ColumnRole = 'k';
  if (ctx.quantity === 'eps') {
    ({ n, k } = nkFromEps(v.eps1 as number, v.eps2 as number));
    nRole = 'eps1';
    kRole = 'eps2';
    if (v.sigma_eps1 !== undefined || v.sigma_eps2 !== undefined) {
      ({ sigmaN, sigmaK } = sigmaNkFromEps(n, k, v.sigma_eps1 ?? 0, v.sigma_eps2 ?? 0));
    }
  } else {
    n = v.n as number;
    k = v.k ?? 0;
  }
  const via = ctx.quantity === 'eps' ? ` (from ε1 = ${v.eps1}, ε2 = ${v.eps2})` : '';
  if (!(n > 0)) throw new InputError('n-not-positive', `n = ${n}${via} is not positive`, at(nRole));
  if (k < -ctx.kTolerance) {
    throw new InputError(
      'negative-k',
      `k = ${k}${via} is below −${ctx.kTolerance}, the tolerance for noise (raise it if the instrument is that noisy)`,
      at(kRole),
      { remedies: [{ option: 'k_tolerance', value: String(+(-k * 1.5).toPrecision(1)) }] },
    );
  }
  const epsSigmas =
    ctx.quantity === 'eps' && v.sigma_eps1 !== undefined && v.sigma_eps2 !== undefined ? { sigmaEps1: v.sigma_eps1, sigmaEps2: v.sigma_eps2 } : {};
  return { line: row.line, x, wavelengthNm, n, k, sigmaN, sigmaK, ...epsSigmas, raw: v };
}

/**
 * 1σ of n and k from independent 1σ of ε1, ε2 by linear propagation through N = √ε:
 * dN = dε/(2N) gives dn = (n·dε1 + k·dε2)/(2|N|²), dk = (n·dε2 − k·dε1)/(2|N|²).
 */
export function sigmaNkFromEps(n: number, k: number, sigmaEps1: number, sigmaEps2: number): { sigmaN: number; sigmaK: number } {
  const twoMod2 = 2 * (n * n + k * k);
  return {
    sigmaN: Math.hypot(n * sigmaEps1, k * sigmaEps2) / twoMod2,
    sigmaK: Math.hypot(n * sigmaEps2, k * sigmaEps1) / twoMod2,
  };
}

/** Line of the first row where x reverses the direction the file started in (ascending or descending). */
function firstDirectionChange(points: Point[]): number | undefined {
  let direction = 0;
  for (let i = 1; i < points.length; i++) {
    const step = Math.sign(points[i].x - points[i - 1].x);
    if (step === 0) continue;
    if (direction === 0) direction = step;
    else if (step !== direction) return points[i].line;
  }
  return undefined;
}

function sameValues(a: Point, b: Point): boolean {
  const keys = new Set([...Object.keys(a.raw), ...Object.keys(b.raw)]) as Set<ColumnRole>;
  return [...keys].every((r) => a.raw[r] === b.raw[r]);
}

/** Identical repeats of a row merge (one warning); the same x with different values is refused. */
function mergeRepeats(sorted: Point[], ctx: NormalizeContext, warnings: string[]): Point[] {
  const out: Point[] = [];
  let repeats = 0;
  for (const p of sorted) {
    const prev = out[out.length - 1];
    if (prev && prev.x === p.x) {
      if (!sameValues(prev, p)) {
        const [first, second] = prev.line < p.line ? [prev, p] : [p, prev];
        throw new InputError('duplicate-x', `x = ${p.x} ${ctx.xUnit} appears again with different values (first on line ${first.line})`, {
          file: ctx.file,
          line: second.line,
          column: ctx.columnOf.x,
        });
      }
      repeats++;
      continue;
    }
    out.push(p);
  }
  if (repeats > 0) warnings.push(`${repeats} identical repeated row(s) merged`);
  return out;
}

/** Warn about spacings more than LARGE_GAP_FACTOR × the median spacing, measured in the file's own x unit. */
function largeGaps(points: Point[], xUnit: SpectralUnit): string | undefined {
  if (points.length < 4) return undefined;
  const steps = points.slice(1).map((p, i) => ({ dx: Math.abs(p.x - points[i].x), from: points[i], to: p }));
  const sortedDx = steps.map((s) => s.dx).sort((a, b) => a - b);
  const median = sortedDx[Math.floor(sortedDx.length / 2)];
  const large = steps.filter((s) => s.dx > LARGE_GAP_FACTOR * median);
  if (large.length === 0) return undefined;
  const worst = large.reduce((a, b) => (b.dx > a.dx ? b : a));
  return (
    `${large.length} large gap(s) in x (over ${LARGE_GAP_FACTOR}× the median spacing of ${+median.toPrecision(3)} ${xUnit}); ` +
    `largest ${+worst.from.wavelengthNm.toFixed(2)}–${+worst.to.wavelengthNm.toFixed(2)} nm (lines ${worst.from.line} and ${worst.to.line}): ` +
    'interpolated values there are uncertain'
  );
}
