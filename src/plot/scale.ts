/**
 * Linear scales and "nice" ticks for plot axes, in the manner of d3-scale / d3-array.
 * Nice steps are 1, 2 or 5 × 10^k (common practice; the same rule as d3-array's tickIncrement,
 * switching factor at √2, √10 and √50). Tick values are built from integer multiples of the step
 * (i × factor × 10^k, or i × factor / 10^−k for small steps) so they print as 0.3, never
 * 0.30000000000000004. Pure functions, no I/O.
 */

/** A nice step written as factor × 10^power, factor ∈ {1, 2, 5}. */
export interface NiceStep {
  factor: 1 | 2 | 5;
  power: number;
}

/**
 * The nice step for about `count` intervals across [start, stop].
 * Takes start < stop (finite) and count ≥ 1; returns { factor, power } with the step
 * factor × 10^power.
 */
export function niceStep(start: number, stop: number, count: number): NiceStep {
  const raw = (stop - start) / Math.max(1, count);
  const power = Math.floor(Math.log10(raw));
  const error = raw / 10 ** power;
  if (error >= Math.sqrt(50)) return { factor: 1, power: power + 1 };
  if (error >= Math.sqrt(10)) return { factor: 5, power };
  if (error >= Math.sqrt(2)) return { factor: 2, power };
  return { factor: 1, power };
}

/** The i-th multiple of a nice step, computed so decimal steps stay exact (0.1 × 3 = 0.3). */
function multiple(i: number, step: NiceStep): number {
  const value = step.power >= 0 ? i * step.factor * 10 ** step.power : (i * step.factor) / 10 ** -step.power;
  return value === 0 ? 0 : value; // no -0
}

/** v / step, exact for decimal steps where possible. */
function quotient(v: number, step: NiceStep): number {
  return step.power >= 0 ? v / (step.factor * 10 ** step.power) : (v * 10 ** -step.power) / step.factor;
}

/** Guard for quotients like 2.9999999999999996 that should be 3. */
const QUOTIENT_SLACK = 1e-9;

/** Multiples of `step` from the first ≥ start to the last ≤ stop. */
function multiplesWithin(start: number, stop: number, step: NiceStep): number[] {
  const first = Math.ceil(quotient(start, step) - QUOTIENT_SLACK);
  const last = Math.floor(quotient(stop, step) + QUOTIENT_SLACK);
  const ticks: number[] = [];
  for (let i = first; i <= last; i++) ticks.push(multiple(i, step));
  return ticks;
}

/**
 * Nice tick values inside [start, stop] (inclusive), about `count` of them (as d3.ticks).
 * Takes finite start ≤ stop and count ≥ 1; returns ascending multiples of the nice step
 * (one value when start = stop, none for a non-finite or reversed interval).
 */
export function niceTicks(start: number, stop: number, count: number): number[] {
  if (!(Number.isFinite(start) && Number.isFinite(stop)) || start > stop) return [];
  if (start === stop) return [start];
  return multiplesWithin(start, stop, niceStep(start, stop, count));
}

/**
 * A nice axis for [start, stop]: the domain extended outwards to multiples of the nice step for
 * about `count` intervals (as d3's scale.nice(), but in one pass so the domain does not grow
 * a second time), and the ticks at every step from one end to the other, so the ticks cover
 * the data. Takes finite start < stop and count ≥ 1; returns { domain, ticks }.
 */
export function niceDomain(start: number, stop: number, count: number): { domain: [number, number]; ticks: number[] } {
  const step = niceStep(start, stop, count);
  let first = Math.floor(quotient(start, step) + QUOTIENT_SLACK);
  let last = Math.ceil(quotient(stop, step) - QUOTIENT_SLACK);
  // The slack forgives rounding noise, but the domain must still contain the data exactly.
  if (multiple(first, step) > start) first -= 1;
  if (multiple(last, step) < stop) last += 1;
  const lo = multiple(first, step);
  const hi = multiple(last, step);
  return { domain: [lo, hi], ticks: multiplesWithin(lo, hi, step) };
}

/**
 * The extent of the finite values in one or more arrays, widened by `padFraction` of the span
 * on each side. A zero span (constant series, single point) is widened to ±5 % of the value,
 * or ±1 around zero. Takes arrays of numbers (NaN and ±Infinity ignored); returns [lo, hi] with
 * lo < hi, or null when there is no finite value.
 */
export function paddedExtent(arrays: ArrayLike<number>[], padFraction: number): [number, number] | null {
  let lo = Infinity;
  let hi = -Infinity;
  for (const values of arrays) {
    for (let i = 0; i < values.length; i++) {
      const v = values[i];
      if (!Number.isFinite(v)) continue;
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  if (lo > hi) return null;
  if (lo === hi) {
    const half = lo === 0 ? 1 : Math.abs(lo) * 0.05;
    return [lo - half, hi + half];
  }
  const pad = (hi - lo) * padFraction;
  return [lo - pad, hi + pad];
}

/** A linear map from a data domain to a pixel range. */
export interface LinearScale {
  (value: number): number;
  domain: [number, number];
  range: [number, number];
}

/**
 * A linear scale mapping domain[0] → range[0] and domain[1] → range[1] (as d3.scaleLinear).
 * Takes a domain with domain[0] ≠ domain[1] (a zero-width domain maps everything to the middle
 * of the range instead of producing NaN) and a pixel range; returns the scale function.
 */
export function linearScale(domain: [number, number], range: [number, number]): LinearScale {
  const [d0, d1] = domain;
  const [r0, r1] = range;
  const span = d1 - d0;
  const scale = ((value: number) => (span === 0 ? (r0 + r1) / 2 : r0 + ((value - d0) / span) * (r1 - r0))) as LinearScale;
  scale.domain = [d0, d1];
  scale.range = [r0, r1];
  return scale;
}

/** Fewest digits (0…15) for which every value prints within `tolerance` of itself. */
function digitsNeeded(values: number[], print: (v: number, digits: number) => string, tolerance: number): number {
  for (let digits = 0; digits < 15; digits++) {
    if (values.every((v) => Math.abs(Number(print(v, digits)) - v) <= tolerance)) return digits;
  }
  return 15;
}

/**
 * A formatter for a set of tick values, with one precision for the whole axis.
 * Fixed notation with the fewest decimals that tell the ticks apart (0.1, 0.2, 0.3);
 * scientific notation ("1.5e-5", "2e6") when the largest |tick| is below 1e-3 or at least 1e6.
 * Zero always prints as "0". Takes the ticks (as niceTicks returns); returns value → label.
 */
export function tickFormat(ticks: number[]): (value: number) => string {
  const finite = ticks.filter(Number.isFinite);
  const maxAbs = finite.reduce((m, v) => Math.max(m, Math.abs(v)), 0);
  let step = Infinity;
  for (let i = 1; i < finite.length; i++) step = Math.min(step, Math.abs(finite[i] - finite[i - 1]));
  if (!Number.isFinite(step) || step === 0) step = maxAbs || 1;
  const tolerance = step * 1e-6;
  const scientific = maxAbs >= 1e6 || (maxAbs > 0 && maxAbs < 1e-3);
  const print = scientific
    ? (v: number, digits: number) => v.toExponential(digits).replace('e+', 'e')
    : (v: number, digits: number) => v.toFixed(digits);
  const digits = digitsNeeded(finite, print, tolerance);
  return (value: number) => (value === 0 ? '0' : print(value, digits));
}
