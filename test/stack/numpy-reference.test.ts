/**
 * R, T, Ψ and Δ of multilayer and absorbing stacks against an independent numpy implementation
 * (scripts/stack_numpy.py: interface/propagation matrices of Azzam & Bashara Fresnel coefficients and
 * Katsidis & Siapkas intensity matrices, numpy 2.4.6), fixture written by scripts/make-stack-reference.py.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { solveStack } from '../../src/stack/transfer-matrix.ts';

interface Medium {
  n: number[];
  k: number[];
}
interface Case {
  name: string;
  ambient: Medium;
  layers: Array<Medium & { thickness_nm: number }>;
  substrate: Medium;
  substrate_mm: number | null;
  results: Array<{ angle_deg: number; Rs: number[]; Rp: number[]; Ts: number[]; Tp: number[]; psi_deg: number[]; delta_deg: number[] }>;
}
const fixture = JSON.parse(readFileSync(new URL('../reference/stack-numpy.json', import.meta.url), 'utf8')) as {
  source: string;
  wavelength_nm: number[];
  cases: Case[];
};

/** Smallest difference of two angles in degrees, across the 0/360 seam. */
const angleGap = (a: number, b: number) => Math.abs(((a - b + 540) % 360) - 180);

describe(`stack engine against ${fixture.source}`, () => {
  it('the fixture names numpy and covers multilayer, absorbing, incoherent and frustrated-TIR cases', () => {
    expect(fixture.source).toMatch(/numpy 2\.4\.6/);
    expect(fixture.cases).toHaveLength(4);
  });

  for (const c of fixture.cases) {
    for (const ref of c.results) {
      it(`${c.name}, ${ref.angle_deg}°: Rs, Rp, Ts, Tp to 1e-10, Ψ and Δ to 1e-8°`, () => {
        const r = solveStack(
          {
            wavelengthNm: fixture.wavelength_nm,
            ambient: c.ambient,
            layers: c.layers.map((l) => ({ n: l.n, k: l.k, thicknessNm: l.thickness_nm })),
            substrate: c.substrate,
            incoherentSubstrateMm: c.substrate_mm ?? undefined,
          },
          ref.angle_deg,
        );
        for (let i = 0; i < fixture.wavelength_nm.length; i++) {
          expect(Math.abs(r.Rs[i] - ref.Rs[i])).toBeLessThan(1e-10);
          expect(Math.abs(r.Rp[i] - ref.Rp[i])).toBeLessThan(1e-10);
          expect(Math.abs(r.Ts[i] - ref.Ts[i])).toBeLessThan(1e-10);
          expect(Math.abs(r.Tp[i] - ref.Tp[i])).toBeLessThan(1e-10);
          expect(Math.abs(r.psiDeg[i] - ref.psi_deg[i])).toBeLessThan(1e-8);
          expect(angleGap(r.deltaDeg[i], ref.delta_deg[i])).toBeLessThan(1e-8);
        }
      });
    }
  }
});
