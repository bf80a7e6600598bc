import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { linearScale, niceDomain, niceStep, niceTicks, paddedExtent, tickFormat } from '../../src/plot/scale.ts';

/** True when v is an integer multiple of step (tolerance for binary floating point, relative to the quotient). */
function isMultipleOf(v: number, step: number): boolean {
  const q = v / step;
  return Math.abs(q - Math.round(q)) < 1e-6 + 1e-9 * Math.abs(q);
}

function stepMantissa(step: number): number {
  return Math.round((step / 10 ** Math.floor(Math.log10(step) + 1e-12)) * 1e6) / 1e6;
}

describe('niceStep (1-2-5 × 10^k, switching at √2, √10, √50 as d3-array: common practice)', () => {
  it('picks the documented steps', () => {
    expect(niceStep(0, 1, 10)).toEqual({ factor: 1, power: -1 });
    expect(niceStep(0, 10, 5)).toEqual({ factor: 2, power: 0 });
    expect(niceStep(0, 100, 3)).toEqual({ factor: 5, power: 1 }); // raw 33.3 → 3.33 ≥ √10
    expect(niceStep(0, 1e-4, 4)).toEqual({ factor: 2, power: -5 }); // raw 2.5e-5
    expect(niceStep(300, 1000, 8)).toEqual({ factor: 1, power: 2 }); // raw 87.5 ≥ √50 × 10
  });
});

describe('niceTicks', () => {
  it('prints decimal ticks exactly (no 0.30000000000000004)', () => {
    expect(niceTicks(0, 1, 10).map(String)).toEqual(['0', '0.1', '0.2', '0.3', '0.4', '0.5', '0.6', '0.7', '0.8', '0.9', '1']);
    expect(niceTicks(-0.3, 0.3, 6).map(String)).toEqual(['-0.3', '-0.2', '-0.1', '0', '0.1', '0.2', '0.3']);
  });

  it('keeps ticks inside the interval and handles degenerate input', () => {
    expect(niceTicks(312, 987, 7)).toEqual([400, 500, 600, 700, 800, 900]);
    expect(niceTicks(5, 5, 5)).toEqual([5]);
    expect(niceTicks(2, 1, 5)).toEqual([]);
    expect(niceTicks(NaN, 1, 5)).toEqual([]);
  });
});

describe('niceDomain', () => {
  it('extends a spectral range to whole ticks', () => {
    expect(niceDomain(312, 987, 8)).toEqual({ domain: [300, 1000], ticks: [300, 400, 500, 600, 700, 800, 900, 1000] });
  });

  it('property: ticks are 1-2-5 multiples, start and end the domain and cover the data', () => {
    fc.assert(
      fc.property(
        fc.double({ min: -1e9, max: 1e9, noNaN: true }),
        fc.double({ min: 1e-12, max: 1e9, noNaN: true }),
        fc.integer({ min: 2, max: 12 }),
        (start, span, count) => {
          const stop = start + span;
          fc.pre(stop > start && span > Math.abs(start) * 1e-6);
          const { domain, ticks } = niceDomain(start, stop, count);
          expect(domain[0]).toBeLessThanOrEqual(start);
          expect(domain[1]).toBeGreaterThanOrEqual(stop);
          expect(ticks[0]).toBe(domain[0]);
          expect(ticks[ticks.length - 1]).toBe(domain[1]);
          const { factor, power } = niceStep(start, stop, count);
          const step = factor * 10 ** power;
          expect([1, 2, 5, 10]).toContain(stepMantissa(ticks[1] - ticks[0]));
          for (const t of ticks) expect(isMultipleOf(t, step)).toBe(true);
          expect(ticks.length).toBeLessThanOrEqual(2 * count + 3);
        },
      ),
      { numRuns: 300, seed: 20261202 },
    );
  });
});

describe('paddedExtent', () => {
  it('ignores NaN and ±Infinity and pads by the fraction of the span', () => {
    expect(
      paddedExtent(
        [
          [1, NaN, 3],
          [Infinity, 2, -Infinity],
        ],
        0.1,
      ),
    ).toEqual([0.8, 3.2]);
  });

  it('widens a zero span: ±5 % of the value, ±1 around zero', () => {
    expect(paddedExtent([[500, 500]], 0.05)).toEqual([475, 525]);
    expect(paddedExtent([[-2]], 0.05)).toEqual([-2.1, -1.9]);
    expect(paddedExtent([[0]], 0.05)).toEqual([-1, 1]);
  });

  it('returns null without finite data', () => {
    expect(paddedExtent([], 0.05)).toBeNull();
    expect(paddedExtent([[NaN], []], 0.05)).toBeNull();
  });
});

describe('linearScale', () => {
  it('maps the domain onto the range, inverted ranges included (SVG y grows downwards)', () => {
    const y = linearScale([0, 2], [300, 100]);
    expect(y(0)).toBe(300);
    expect(y(1)).toBe(200);
    expect(y(2)).toBe(100);
    expect(y.domain).toEqual([0, 2]);
  });

  it('maps everything to the middle of the range for a zero-width domain instead of NaN', () => {
    expect(linearScale([1, 1], [0, 100])(1)).toBe(50);
  });
});

describe('tickFormat', () => {
  const labels = (ticks: number[]) => ticks.map(tickFormat(ticks));

  it('uses the fewest decimals that tell ticks apart, one precision per axis', () => {
    expect(labels([0, 0.1, 0.2, 0.3])).toEqual(['0', '0.1', '0.2', '0.3']);
    expect(labels([1.9, 1.92, 1.94])).toEqual(['1.90', '1.92', '1.94']);
    expect(labels([300, 400, 500])).toEqual(['300', '400', '500']);
    expect(labels([-0.005, 0, 0.005, 0.01])).toEqual(['-0.005', '0', '0.005', '0.010']);
  });

  it('switches to scientific notation for tiny residuals and huge values', () => {
    expect(labels([-2e-5, -1e-5, 0, 1e-5, 2e-5])).toEqual(['-2e-5', '-1e-5', '0', '1e-5', '2e-5']);
    expect(labels([0, 5e-6, 1e-5, 1.5e-5])).toEqual(['0', '5.0e-6', '1.0e-5', '1.5e-5']);
    expect(labels([0, 1e6, 2e6])).toEqual(['0', '1e6', '2e6']);
  });

  it('property: labels of nice ticks are short and parse back to the tick', () => {
    fc.assert(
      fc.property(fc.double({ min: -1e8, max: 1e8, noNaN: true }), fc.double({ min: 1e-9, max: 1e8, noNaN: true }), (start, span) => {
        fc.pre(span > Math.abs(start) * 1e-6);
        const { ticks } = niceDomain(start, start + span, 6);
        const format = tickFormat(ticks);
        const step = ticks[1] - ticks[0];
        for (const t of ticks) {
          const label = format(t);
          // the longest: a sign, "0.000" and 7 significant digits, needed when the span is 1e-6 of the value
          expect(label.length).toBeLessThanOrEqual(13);
          expect(Math.abs(Number(label) - t)).toBeLessThanOrEqual(step * 1e-6);
        }
      }),
      { numRuns: 300, seed: 20261202 },
    );
  });
});
