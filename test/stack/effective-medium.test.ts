/**
 * Effective-medium mixtures: Bruggeman and Maxwell Garnett (D. E. Aspnes, Thin Solid Films 89, 249 (1982))
 * against their closed forms and against numpy (scripts/make-ema-reference.py, numpy 2.4.6, which solves the
 * Bruggeman condition with numpy.roots), their limits, and mixtures as design sources: parsing, refusals with
 * file:line:column and field, nested mixtures, and a mixed stack's R, Ψ, Δ against the numpy stack reference
 * (scripts/stack_numpy.py). Registry refs inside a mixture: test/stack/design.test.ts.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { epsFromNk } from '../../src/optics/permittivity.ts';
import { computeStack, parseStackOptions, resolveStackDesign, type ResolveContext } from '../../src/service/stack.ts';
import { parseStackDesign } from '../../src/service/stack-design.ts';
import { bruggeman, maxwellGarnett, type Complex } from '../../src/stack/effective-medium.ts';
import { refusal } from './refusals.ts';

const fixture = JSON.parse(readFileSync(new URL('../reference/ema-numpy.json', import.meta.url), 'utf8')) as {
  source: string;
  mixing: Array<{
    name: string;
    first: [number, number];
    second: [number, number];
    fraction: number;
    bruggeman: [number, number];
    maxwell_garnett: [number, number];
  }>;
  stack: {
    wavelength_nm: number[];
    layer_nk: Array<[number, number]>;
    results: Array<{ angle_deg: number; Rs: number[]; Rp: number[]; psi_deg: number[]; delta_deg: number[] }>;
  };
};

const eps = (n: number, k: number): Complex => {
  const e = epsFromNk(n, k);
  return { re: e.eps1, im: e.eps2 };
};
const c = (re: number, im = 0): Complex => ({ re, im });
const gap = (a: Complex, b: Complex) => Math.hypot(a.re - b.re, a.im - b.im);
const size = (a: Complex) => Math.hypot(a.re, a.im);
const PAIRS: Array<[string, Complex, Complex]> = [
  ['glass and void', eps(1.5, 0), eps(1, 0)],
  ['a-Si-like and void', eps(4.2, 0.6), eps(1, 0)],
  ['silica host, metal-like inclusions', eps(1.46, 0), eps(0.15, 3.5)],
  ['two absorbers', eps(2, 0.3), eps(3, 1.5)],
];

describe('Bruggeman (Aspnes 1982): the root of the two-phase condition', () => {
  it('satisfies (1 − f)(ε1 − ε)/(ε1 + 2ε) + f(ε2 − ε)/(ε2 + 2ε) = 0 and is passive (Im ε ≥ 0)', () => {
    for (const [, e1, e2] of PAIRS) {
      for (const f of [0.05, 0.2, 0.5, 0.8, 0.95]) {
        const e = bruggeman(e1, e2, f);
        const term = (ei: Complex) => {
          const num = c(ei.re - e.re, ei.im - e.im),
            den = c(ei.re + 2 * e.re, ei.im + 2 * e.im);
          const d = den.re * den.re + den.im * den.im;
          return c((num.re * den.re + num.im * den.im) / d, (num.im * den.re - num.re * den.im) / d);
        };
        const a = term(e1),
          b = term(e2);
        expect(Math.hypot((1 - f) * a.re + f * b.re, (1 - f) * a.im + f * b.im)).toBeLessThan(1e-12);
        expect(e.im).toBeGreaterThanOrEqual(-1e-14 * size(e));
      }
    }
  });

  it('glass (ε = 2.25) and void at f = 0.5: the closed-form root (b + √(b² + 8ε1ε2))/4 with b = 0.5·2.25 + 0.5·1 = 1.625 (hand-worked)', () => {
    const root = (1.625 + Math.sqrt(1.625 ** 2 + 8 * 2.25)) / 4;
    expect(Math.abs(bruggeman(c(2.25), c(1), 0.5).re - root)).toBeLessThan(1e-14);
    expect(bruggeman(c(2.25), c(1), 0.5).im).toBe(0);
  });

  it('stays on one continuous branch from f = 0 to 1 (no jump to the unphysical root)', () => {
    for (const [, e1, e2] of PAIRS) {
      let last = bruggeman(e1, e2, 0);
      for (let i = 1; i <= 1000; i++) {
        const next = bruggeman(e1, e2, i / 1000);
        expect(gap(next, last)).toBeLessThan(0.05 * Math.max(size(e1), size(e2)));
        last = next;
      }
    }
  });
});

describe('Maxwell Garnett (Aspnes 1982)', () => {
  it('satisfies (ε − εh)/(ε + 2εh) = f(εi − εh)/(εi + 2εh); glass with 50 % void gives 2.25·(1 + 2a)/(1 − a), a = −0.5·1.25/5.5 (hand-worked)', () => {
    const a = (-0.5 * 1.25) / 5.5;
    expect(Math.abs(maxwellGarnett(c(2.25), c(1), 0.5).re - (2.25 * (1 + 2 * a)) / (1 - a))).toBeLessThan(1e-14);
  });
});

describe(`mixing against ${fixture.source}`, () => {
  it('the fixture names numpy 2.4.6 and covers 4 pairs × 6 fractions', () => {
    expect(fixture.source).toMatch(/numpy 2\.4\.6/);
    expect(fixture.mixing).toHaveLength(24);
  });
  for (const m of fixture.mixing) {
    it(`${m.name}, f = ${m.fraction}: Bruggeman and Maxwell Garnett to 1e-12 relative`, () => {
      const e1 = eps(...m.first),
        e2 = eps(...m.second);
      const br = bruggeman(e1, e2, m.fraction),
        mg = maxwellGarnett(e1, e2, m.fraction);
      expect(gap(br, c(...m.bruggeman))).toBeLessThan(1e-12 * size(br) + 1e-15);
      expect(gap(mg, c(...m.maxwell_garnett))).toBeLessThan(1e-12 * size(mg) + 1e-15);
    });
  }
});

describe('limits', () => {
  it('fraction 0 gives the first material and fraction 1 the second, for both rules', () => {
    for (const [, e1, e2] of PAIRS) {
      for (const rule of [bruggeman, maxwellGarnett]) {
        expect(gap(rule(e1, e2, 0), e1)).toBeLessThan(1e-13 * size(e1));
        expect(gap(rule(e1, e2, 1), e2)).toBeLessThan(1e-13 * size(e2));
      }
    }
  });

  it('Bruggeman is symmetric: swapping the materials with f → 1 − f gives the same ε (the two phases are equivalent, Aspnes 1982)', () => {
    for (const [, e1, e2] of PAIRS) {
      for (const f of [0.1, 0.3, 0.5, 0.77])
        expect(gap(bruggeman(e1, e2, f), bruggeman(e2, e1, 1 - f))).toBeLessThan(1e-12 * size(bruggeman(e1, e2, f)));
    }
  });

  it('Maxwell Garnett and Bruggeman agree to first order at small f: both ≈ ε1 + 3f ε1(ε2 − ε1)/(ε2 + 2ε1), difference O(f²)', () => {
    for (const [, e1, e2] of PAIRS) {
      const diff = (f: number) => gap(bruggeman(e1, e2, f), maxwellGarnett(e1, e2, f));
      // Halving f quarters the difference (second order), and both sit on the common tangent.
      expect(diff(1e-3) / diff(5e-4)).toBeGreaterThan(3.6);
      expect(diff(1e-3) / diff(5e-4)).toBeLessThan(4.4);
      const num = c(e2.re - e1.re, e2.im - e1.im),
        den = c(e2.re + 2 * e1.re, e2.im + 2 * e1.im);
      const d = den.re * den.re + den.im * den.im;
      const q = c((num.re * den.re + num.im * den.im) / d, (num.im * den.re - num.re * den.im) / d);
      const slope = c(3 * (e1.re * q.re - e1.im * q.im), 3 * (e1.re * q.im + e1.im * q.re));
      const f = 1e-4;
      const tangent = c(e1.re + f * slope.re, e1.im + f * slope.im);
      expect(gap(bruggeman(e1, e2, f), tangent)).toBeLessThan(100 * f * f * size(slope) + 1e-13);
      expect(gap(maxwellGarnett(e1, e2, f), tangent)).toBeLessThan(100 * f * f * size(slope) + 1e-13);
    }
  });
});

describe('mixtures in a design file', () => {
  const mixLayer = (material: string) =>
    `{\n  "layers": [\n    {"material": ${material}, "thickness_nm": 10}\n  ],\n  "substrate": {"material": {"n": 1.5}}\n}\n`;

  it('a fraction outside 0–1 is refused at its line and column, naming the field', () => {
    const e = refusal(() => parseStackDesign(mixLayer('{"mix": "bruggeman", "materials": [{"n": 1.5}, {"n": 1}], "fraction": 1.2}'), 'd.json'));
    expect(e.rule).toBe('design-format');
    expect(e.location).toMatchObject({ file: 'd.json', line: 3, column: 88, field: 'layers.0.material.fraction' });
    expect(e.describe()).toMatch(/^d\.json:3:88: layers\.0\.material\.fraction: fraction is a volume fraction, 0 ≤ fraction ≤ 1/);
  });

  it('a mixture of one or three materials is refused at "materials"', () => {
    for (const list of ['[{"n": 1.5}]', '[{"n": 1.5}, {"n": 1}, {"n": 2}]']) {
      const e = refusal(() => parseStackDesign(mixLayer(`{"mix": "maxwell-garnett", "materials": ${list}, "fraction": 0.2}`), 'd.json'));
      expect(e.location).toMatchObject({ line: 3, column: 58, field: 'layers.0.material.materials' });
      expect(e.message).toMatch(/exactly two materials/);
    }
  });

  it('an unknown mixing rule is refused at "mix", naming the rules', () => {
    const e = refusal(() => parseStackDesign(mixLayer('{"mix": "looyenga", "materials": [{"n": 1.5}, {"n": 1}], "fraction": 0.2}'), 'd.json'));
    expect(e.location).toMatchObject({ line: 3, column: 26, field: 'layers.0.material.mix' });
    expect(e.message).toMatch(/"bruggeman", "maxwell-garnett"/);
  });

  it('a fault inside a nested mixture is located in the nested source', () => {
    const e = refusal(() =>
      parseStackDesign(
        mixLayer(
          '{"mix": "bruggeman", "materials": [{"n": 1.5}, {"mix": "bruggeman", "materials": [{"n": 1}, {"n": 1.4, "k": -1}], "fraction": 0.5}], "fraction": 0.5}',
        ),
        'd.json',
      ),
    );
    expect(e.location.field).toBe('layers.0.material.materials.1.materials.1.k');
    expect(e.location.line).toBe(3);
  });

  it('the example design data/marrowick/porous-silica-ar.stack.json parses, with a nested mixture', () => {
    const text = readFileSync(new URL('../../data/marrowick/porous-silica-ar.stack.json', import.meta.url), 'utf8');
    const d = parseStackDesign(text, 'porous-silica-ar.stack.json');
    expect(d.layers[0].material).toMatchObject({ mix: 'bruggeman', fraction: 0.5 });
  });
});

describe('mixtures resolved and computed', () => {
  const ctx: ResolveContext = { designFile: 'd.json', designText: null, allowFiles: true };

  it(`a stack with a Bruggeman and a Maxwell Garnett layer: Rs, Rp to 1e-10 and Ψ, Δ to 1e-8° against ${fixture.source} (stack by scripts/stack_numpy.py)`, async () => {
    const design = parseStackDesign({
      layers: [
        {
          material: {
            mix: 'bruggeman',
            materials: [
              { n: 3.9, k: 0.02 },
              { n: 1, k: 0 },
            ],
            fraction: 0.3,
          },
          thickness_nm: 40,
        },
        {
          material: {
            mix: 'maxwell-garnett',
            materials: [
              { n: 1.46, k: 0 },
              { n: 0.15, k: 3.5 },
            ],
            fraction: 0.1,
          },
          thickness_nm: 60,
        },
      ],
      substrate: { material: { n: 3.88, k: 0.02 } },
    });
    const report = computeStack(await resolveStackDesign(design, ctx), parseStackOptions({ angle: '0,70' }, fixture.stack.wavelength_nm));
    for (const [i, ref] of fixture.stack.results.entries()) {
      const r = report.results[i];
      expect(r.angle_deg).toBe(ref.angle_deg);
      for (let j = 0; j < ref.Rs.length; j++) {
        expect(Math.abs(r.Rs[j] - ref.Rs[j])).toBeLessThan(1e-10);
        expect(Math.abs(r.Rp[j] - ref.Rp[j])).toBeLessThan(1e-10);
        expect(Math.abs(r.psi_deg[j] - ref.psi_deg[j])).toBeLessThan(1e-8);
        expect(Math.abs(((r.delta_deg[j] - ref.delta_deg[j] + 540) % 360) - 180)).toBeLessThan(1e-8);
      }
    }
    expect(report.materials.map((m) => m.role)).toEqual([
      'ambient',
      'layer 1',
      'layer 1, bruggeman part 1',
      'layer 1, bruggeman part 2',
      'layer 2',
      'layer 2, maxwell-garnett part 1',
      'layer 2, maxwell-garnett part 2',
      'substrate',
    ]);
  });

  it('a mixture of lossless materials is lossless (k = 0 exactly), so it may even be the ambient', async () => {
    const design = parseStackDesign({
      ambient: { material: { mix: 'maxwell-garnett', materials: [{ n: 1.5 }, { n: 1 }], fraction: 1 } },
      layers: [],
      substrate: { material: { n: 1.5 } },
    });
    const report = computeStack(await resolveStackDesign(design, ctx), parseStackOptions({}, [550]));
    expect(report.results[0].R[0]).toBeCloseTo(0.04, 12); // ambient n = 1 against glass 1.5: ((1.5 − 1)/2.5)² (Fresnel)
  });

  it('a part that does not cover the wavelengths is refused, naming the part', async () => {
    const design = parseStackDesign({
      layers: [
        {
          material: {
            mix: 'bruggeman',
            materials: [{ model: 'cauchy', parameters: { A: 1.45, B: 0.004, C: 0 }, range_nm: [400, 800] }, { n: 1 }],
            fraction: 0.3,
          },
          thickness_nm: 50,
        },
      ],
      substrate: { material: { n: 1.5 } },
    });
    const resolved = await resolveStackDesign(design, ctx);
    const e = refusal(() => computeStack(resolved, parseStackOptions({}, [300])));
    expect(e.rule).toBe('stack-out-of-range');
    expect(e.message).toMatch(/^layer 1, bruggeman part 1 /);
    expect(e.location.field).toBe('layers.0.material.materials.0');
  });
});
