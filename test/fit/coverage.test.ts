/**
 * The standard errors cover the truth at the nominal rate: the seeded Monte Carlo of scripts/fit-coverage.ts
 * (200 Tauc-Lorentz tables with sigma columns), 1σ coverage of every parameter within 60–76 % (ideal 68.3 %).
 */
import { describe, expect, it } from 'vitest';
import { coverage, DRAWS } from '../../scripts/fit-coverage.ts';

describe('standard errors cover the truth at the nominal rate (seeded Monte Carlo)', () => {
  it(`Tauc-Lorentz with sigma columns, ${DRAWS} draws: 1σ coverage of every parameter within 60–76 %`, () => {
    const result = coverage(DRAWS);
    for (const [p, c] of Object.entries(result)) {
      expect(c, p).toBeGreaterThanOrEqual(0.6);
      expect(c, p).toBeLessThanOrEqual(0.76);
    }
  }, 60_000);
});
