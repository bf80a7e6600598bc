/**
 * The engine's Ψ/Δ-only path (psiDeltaSetup, prepareLayer and psiDeltaInto, used by the ellipsometry fit) against the same independent
 * numpy fixture as solveStack (scripts/stack_numpy.py, numpy 2.4.6, written by scripts/make-stack-reference.py):
 * multilayer, absorbing, incoherent-substrate (Ψ, Δ of the front surface) and frustrated-TIR cases, with the points
 * read through a grid index and written through an output index as the fit does.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { prepareLayer, psiDeltaInto, psiDeltaSetup } from '../../src/stack/transfer-matrix.ts';

interface Medium {
  n: number[];
  k: number[];
}
const fixture = JSON.parse(readFileSync(new URL('../reference/stack-numpy.json', import.meta.url), 'utf8')) as {
  source: string;
  wavelength_nm: number[];
  cases: Array<{
    name: string;
    ambient: Medium;
    layers: Array<Medium & { thickness_nm: number }>;
    substrate: Medium;
    results: Array<{ angle_deg: number; psi_deg: number[]; delta_deg: number[] }>;
  }>;
};
const angleGap = (a: number, b: number) => Math.abs(((a - b + 540) % 360) - 180);

describe(`Ψ/Δ path of the stack engine against ${fixture.source}`, () => {
  for (const c of fixture.cases) {
    for (const ref of c.results) {
      it(`${c.name}, ${ref.angle_deg}°: Ψ and Δ to 1e-8°, points in reverse order`, () => {
        const wl = fixture.wavelength_nm;
        const grid = wl.map((_, i) => wl.length - 1 - i); // point i reads grid entry wl.length − 1 − i
        const setup = psiDeltaSetup(
          grid.map((g) => wl[g]),
          grid,
          c.ambient,
          c.substrate,
          ref.angle_deg,
        );
        const psi = new Float64Array(wl.length);
        const delta = new Float64Array(wl.length);
        const layers = c.layers.map((l) => ({ prepared: prepareLayer(setup, l), medium: l, thicknessNm: l.thickness_nm }));
        psiDeltaInto(setup, layers, psi, delta, grid); // written back in grid order
        const psiOnTheWay = new Float64Array(wl.length);
        const deltaOnTheWay = new Float64Array(wl.length);
        // the same layers prepared point by point on the way: the same numbers
        psiDeltaInto(
          setup,
          layers.map(({ medium, thicknessNm }) => ({ medium, thicknessNm })),
          psiOnTheWay,
          deltaOnTheWay,
          grid,
        );
        expect(Array.from(psiOnTheWay)).toEqual(Array.from(psi));
        expect(Array.from(deltaOnTheWay)).toEqual(Array.from(delta));
        for (let i = 0; i < wl.length; i++) {
          expect(Math.abs(psi[i] - ref.psi_deg[i])).toBeLessThan(1e-8);
          expect(angleGap(delta[i], ref.delta_deg[i])).toBeLessThan(1e-8);
        }
      });
    }
  }
});
