/**
 * Smallest and largest value of an array by a loop. `Math.min(...values)` passes every element as
 * an argument on the stack and overflows it at about 125,000 elements (V8), so measured tables of
 * any size go through these instead.
 */

/** The smallest value; NaN when any is NaN; +Infinity for an empty array (as Math.min()). */
export function minOf(values: ArrayLike<number>): number {
  let min = Infinity;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (Number.isNaN(v)) return NaN;
    if (v < min) min = v;
  }
  return min;
}

/** The largest value; NaN when any is NaN; -Infinity for an empty array (as Math.max()). */
export function maxOf(values: ArrayLike<number>): number {
  let max = -Infinity;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (Number.isNaN(v)) return NaN;
    if (v > max) max = v;
  }
  return max;
}
