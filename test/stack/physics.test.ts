/**
 * The transfer-matrix engine against closed forms computed here independently of it (each test names its
 * source), facts of the trade, and the colour of the perfect reflector.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { cieTables } from '../../src/service/cie.ts';
import { colourOf, COLOUR_GRID_NM } from '../../src/stack/colour.ts';
import { solveStack, type StackLayer, type StackMedium } from '../../src/stack/transfer-matrix.ts';

const constant = (n: number, k = 0, count = 1): StackMedium => ({ n: new Array(count).fill(n), k: new Array(count).fill(k) });
const layer = (n: number, thicknessNm: number, k = 0, count = 1): StackLayer => ({ ...constant(n, k, count), thicknessNm });
const air = constant(1);
const deg = (rad: number) => (rad * 180) / Math.PI;

describe('closed forms', () => {
  it('bare glass n = 1.52 at normal incidence: R = ((1 − 1.52)/(1 + 1.52))² ≈ 4.26 % (Fresnel equations; Hecht, Optics, ch. 4)', () => {
    const r = solveStack({ wavelengthNm: [550], ambient: air, layers: [], substrate: constant(1.52) }, 0);
    const expected = ((1 - 1.52) / (1 + 1.52)) ** 2;
    expect(expected).toBeCloseTo(0.0426, 4);
    expect(r.Rs[0]).toBeCloseTo(expected, 14);
    expect(r.Rp[0]).toBeCloseTo(expected, 14);
    expect(r.Ts[0]).toBeCloseTo(1 - expected, 14);
  });

  it('quarter-wave MgF2 (n = 1.38) on n = 1.52 glass at its design wavelength: R = ((1.52 − 1.38²)/(1.52 + 1.38²))² ≈ 1.26 % (Macleod, Thin-Film Optical Filters, ch. 3)', () => {
    const design = 550;
    const r = solveStack({ wavelengthNm: [design], ambient: air, layers: [layer(1.38, design / (4 * 1.38))], substrate: constant(1.52) }, 0);
    const expected = ((1.52 - 1.38 ** 2) / (1.52 + 1.38 ** 2)) ** 2;
    expect(expected).toBeCloseTo(0.0126, 4);
    expect(r.Rs[0]).toBeCloseTo(expected, 14);
    // A half-wave layer is absent at its design wavelength (Macleod ch. 3): bare-glass reflectance.
    const half = solveStack({ wavelengthNm: [design], ambient: air, layers: [layer(1.38, design / (2 * 1.38))], substrate: constant(1.52) }, 0);
    expect(half.Rs[0]).toBeCloseTo(((1 - 1.52) / 2.52) ** 2, 14);
  });

  it("Brewster's angle atan(n) on a bare dielectric: Rp = 0 (Hecht ch. 4)", () => {
    for (const n of [1.33, 1.52, 2.4]) {
      const r = solveStack({ wavelengthNm: [633], ambient: air, layers: [], substrate: constant(n) }, deg(Math.atan(n)));
      expect(r.Rp[0]).toBeLessThan(1e-28);
      expect(r.Rs[0]).toBeGreaterThan(0.01);
    }
  });

  it('an incoherent slab of n = 1.52 in air: R = 2R₁/(1 + R₁) ≈ 8.17 %, T = (1 − R₁)/(1 + R₁) (sum of multiple reflections, Macleod ch. 2)', () => {
    const R1 = ((1 - 1.52) / (1 + 1.52)) ** 2;
    const r = solveStack({ wavelengthNm: [550], ambient: air, layers: [], substrate: constant(1.52), incoherentSubstrateMm: 1 }, 0);
    expect((2 * R1) / (1 + R1)).toBeCloseTo(0.0817, 4);
    expect(r.Rs[0]).toBeCloseTo((2 * R1) / (1 + R1), 14);
    expect(r.Ts[0]).toBeCloseTo((1 - R1) / (1 + R1), 14);
  });

  it('an absorbing incoherent slab: T = (1 − R₁)²τ/(1 − R₁²τ²) with τ = exp(−4πkd/λ) (Beer-Lambert with multiple reflections, Macleod ch. 2)', () => {
    const k = 2e-6,
      d = 1e6,
      lambda = 500;
    const R1 = ((1 - 1.52) ** 2 + k ** 2) / ((1 + 1.52) ** 2 + k ** 2);
    const tau = Math.exp((-4 * Math.PI * k * d) / lambda);
    const r = solveStack({ wavelengthNm: [lambda], ambient: air, layers: [], substrate: constant(1.52, k), incoherentSubstrateMm: 1 }, 0);
    expect(r.Ts[0]).toBeCloseTo(((1 - R1) ** 2 * tau) / (1 - R1 ** 2 * tau ** 2), 12);
    expect(r.Rs[0]).toBeCloseTo(R1 + ((1 - R1) ** 2 * R1 * tau ** 2) / (1 - R1 ** 2 * tau ** 2), 12);
  });
});

describe('conservation of energy', () => {
  const lossless = fc.record({
    layers: fc.array(fc.record({ n: fc.double({ min: 1.2, max: 2.6, noNaN: true }), d: fc.double({ min: 0, max: 500, noNaN: true }) }), {
      maxLength: 12,
    }),
    substrate: fc.double({ min: 1.3, max: 4, noNaN: true }),
    angle: fc.double({ min: 0, max: 85, noNaN: true }),
    lambda: fc.double({ min: 300, max: 1600, noNaN: true }),
    incoherent: fc.boolean(),
  });

  it('lossless stacks: R + T = 1 to 1e-12 for s and p, with and without an incoherent substrate (fast-check, seeded)', () => {
    fc.assert(
      fc.property(lossless, (c) => {
        const r = solveStack(
          {
            wavelengthNm: [c.lambda],
            ambient: air,
            layers: c.layers.map((l) => layer(l.n, l.d)),
            substrate: constant(c.substrate),
            incoherentSubstrateMm: c.incoherent ? 1 : undefined,
          },
          c.angle,
        );
        expect(Math.abs(r.Rs[0] + r.Ts[0] - 1)).toBeLessThan(1e-12);
        expect(Math.abs(r.Rp[0] + r.Tp[0] - 1)).toBeLessThan(1e-12);
      }),
      { seed: 17, numRuns: 400 },
    );
  });

  it('absorbing stacks: A = 1 − R − T ≥ 0 everywhere, R and T in [0, 1] (fast-check, seeded)', () => {
    const absorbing = fc.record({
      layers: fc.array(
        fc.record({
          n: fc.double({ min: 0.05, max: 5, noNaN: true }),
          k: fc.double({ min: 0, max: 6, noNaN: true }),
          d: fc.double({ min: 0, max: 300, noNaN: true }),
        }),
        { minLength: 1, maxLength: 8 },
      ),
      sub: fc.record({ n: fc.double({ min: 0.1, max: 5, noNaN: true }), k: fc.double({ min: 0, max: 5, noNaN: true }) }),
      angle: fc.double({ min: 0, max: 85, noNaN: true }),
      lambda: fc.double({ min: 300, max: 1600, noNaN: true }),
    });
    fc.assert(
      fc.property(absorbing, (c) => {
        const r = solveStack(
          { wavelengthNm: [c.lambda], ambient: air, layers: c.layers.map((l) => layer(l.n, l.d, l.k)), substrate: constant(c.sub.n, c.sub.k) },
          c.angle,
        );
        for (const [R, T] of [
          [r.Rs[0], r.Ts[0]],
          [r.Rp[0], r.Tp[0]],
        ]) {
          expect(R).toBeGreaterThanOrEqual(0);
          expect(T).toBeGreaterThanOrEqual(0);
          expect(1 - R - T).toBeGreaterThanOrEqual(-1e-12);
        }
      }),
      { seed: 14, numRuns: 400 },
    );
  });

  it('total internal reflection off a lossless denser ambient: R = 1, T = 0', () => {
    const r = solveStack({ wavelengthNm: [600], ambient: constant(1.5), layers: [], substrate: constant(1.0) }, 60);
    expect(r.Rs[0]).toBeCloseTo(1, 14);
    expect(r.Rp[0]).toBeCloseTo(1, 14);
    expect(r.Ts[0]).toBe(0);
  });
});

describe('facts of the trade (common practice, no source)', () => {
  it('reflection at normal incidence off a higher-index medium reverses the phase: r = (n₀ − n₁)/(n₀ + n₁) < 0, 180°', () => {
    const r = solveStack({ wavelengthNm: [550], ambient: air, layers: [], substrate: constant(1.52) }, 0);
    expect(r.rsRe[0]).toBeCloseTo((1 - 1.52) / (1 + 1.52), 14);
    expect(Math.abs(deg(Math.atan2(r.rsIm[0], r.rsRe[0])))).toBeCloseTo(180, 10);
    // off a lower-index medium: no reversal
    const back = solveStack({ wavelengthNm: [550], ambient: constant(1.52), layers: [], substrate: air }, 0);
    expect(back.rsRe[0]).toBeCloseTo((1.52 - 1) / (1.52 + 1), 14);
  });

  it('a ~10 nm free-standing film of n ≈ 1.33 reflects almost no visible light (it looks black), ~100 nm several percent', () => {
    const wl = [...COLOUR_GRID_NM];
    const film = (d: number) =>
      solveStack(
        { wavelengthNm: wl, ambient: constant(1, 0, wl.length), layers: [layer(1.33, d, 0, wl.length)], substrate: constant(1, 0, wl.length) },
        0,
      );
    const cie = cieTables();
    const thin = colourOf(film(10).Rs, cie);
    const thick = colourOf(film(100).Rs, cie);
    expect(thin.Y).toBeLessThan(0.2); // luminous reflectance, %
    expect(Math.max(...film(10).Rs)).toBeLessThan(0.005); // under 0.5 % at every visible wavelength
    expect(thick.Y).toBeGreaterThan(3);
    expect(thick.Y).toBeLessThan(20);
  });

  it('interference colours repeat as a film thickens: reflectance is periodic in thickness with period λ/(2n) at normal incidence', () => {
    const lambda = 550,
      n = 1.33;
    const R = (d: number) => solveStack({ wavelengthNm: [lambda], ambient: air, layers: [layer(n, d)], substrate: constant(1.46) }, 0).Rs[0];
    for (const d of [37, 120, 333]) expect(R(d + lambda / (2 * n))).toBeCloseTo(R(d), 12);
    // and the colour chart of a free-standing water film goes through several cycles of hue between 0 and 1500 nm
    const wl = [...COLOUR_GRID_NM];
    const cie = cieTables();
    const hues: number[] = [];
    for (let d = 200; d <= 1500; d += 10) {
      const s = solveStack(
        { wavelengthNm: wl, ambient: constant(1, 0, wl.length), layers: [layer(n, d, 0, wl.length)], substrate: constant(1, 0, wl.length) },
        0,
      );
      const c = colourOf(s.Rs, cie);
      hues.push(Math.atan2(c.b, c.a));
    }
    let turns = 0;
    for (let i = 1; i < hues.length; i++) {
      let step = hues[i] - hues[i - 1];
      if (step > Math.PI) step -= 2 * Math.PI;
      if (step < -Math.PI) step += 2 * Math.PI;
      turns += step / (2 * Math.PI);
    }
    expect(Math.abs(turns)).toBeGreaterThan(2);
  });
});

describe('ellipsometric Ψ, Δ as ellipsometers report them (Azzam & Bashara, N = n − ik)', () => {
  it('bare dielectric: Δ = 180° below Brewster, 0° above; n = 1.5 at 45° gives Ψ = 16.874° (Azzam & Bashara Fresnel formulas, evaluated by hand below)', () => {
    const n = 1.5;
    const at = (angle: number) => solveStack({ wavelengthNm: [633], ambient: air, layers: [], substrate: constant(n) }, angle);
    const t0 = (45 * Math.PI) / 180;
    const t1 = Math.asin(Math.sin(t0) / n);
    const rp = (n * Math.cos(t0) - Math.cos(t1)) / (n * Math.cos(t0) + Math.cos(t1));
    const rs = (Math.cos(t0) - n * Math.cos(t1)) / (Math.cos(t0) + n * Math.cos(t1));
    const r45 = at(45);
    expect(r45.psiDeg[0]).toBeCloseTo(deg(Math.atan(Math.abs(rp / rs))), 12);
    expect(r45.psiDeg[0]).toBeCloseTo(16.874, 3);
    expect(r45.deltaDeg[0]).toBeCloseTo(180, 10);
    expect(at(60).deltaDeg[0]).toBeCloseTo(0, 10);
    expect(at(0).deltaDeg[0]).toBeCloseTo(180, 10);
  });

  it('bare absorbing substrate: 0° < Δ < 180°; N = 3.88 − 0.02i at 70° gives Ψ = 10.558°, Δ = 179.188° (numpy check quoted in the project references)', () => {
    const r = solveStack({ wavelengthNm: [633], ambient: air, layers: [], substrate: constant(3.88, 0.02) }, 70);
    expect(r.psiDeg[0]).toBeCloseTo(10.558, 3);
    expect(r.deltaDeg[0]).toBeCloseTo(179.188, 3);
    for (const angle of [20, 45, 65, 75, 80, 85]) {
      for (const [n, k] of [
        [3.88, 0.02],
        [0.2, 3.4],
        [1.5, 0.5],
      ]) {
        const d = solveStack({ wavelengthNm: [633], ambient: air, layers: [], substrate: constant(n, k) }, angle).deltaDeg[0];
        expect(d).toBeGreaterThan(0);
        expect(d).toBeLessThan(180);
      }
    }
  });

  it('Δ stays in [0, 360) over film thickness and angle', () => {
    for (let d = 0; d <= 600; d += 7) {
      for (const angle of [50, 70]) {
        const r = solveStack({ wavelengthNm: [633], ambient: air, layers: [layer(1.46, d)], substrate: constant(3.88, 0.02) }, angle);
        expect(r.deltaDeg[0]).toBeGreaterThanOrEqual(0);
        expect(r.deltaDeg[0]).toBeLessThan(360);
      }
    }
  });

  it('Ψ and Δ ignore the back surface of an incoherent substrate', () => {
    const problem = { wavelengthNm: [633], ambient: air, layers: [layer(1.46, 100)], substrate: constant(1.52) };
    const front = solveStack(problem, 65);
    const slab = solveStack({ ...problem, incoherentSubstrateMm: 1 }, 65);
    expect(slab.psiDeg[0]).toBe(front.psiDeg[0]);
    expect(slab.deltaDeg[0]).toBe(front.deltaDeg[0]);
    expect(slab.Rs[0]).toBeGreaterThan(front.Rs[0]);
  });
});

describe('colour (CIE 1931 2°, D65)', () => {
  it('a perfect reflector is the D65 white point x = 0.3127, y = 0.3290 (CIE 15:2004), Y = 100, L* = 100, a* = b* = 0, #ffffff', () => {
    const c = colourOf(
      COLOUR_GRID_NM.map(() => 1),
      cieTables(),
    );
    expect(c.x).toBeCloseTo(0.3127, 4);
    expect(c.y).toBeCloseTo(0.329, 4);
    expect(c.Y).toBeCloseTo(100, 12);
    expect(c.L).toBeCloseTo(100, 12);
    expect(Math.abs(c.a)).toBeLessThan(1e-9);
    expect(Math.abs(c.b)).toBeLessThan(1e-9);
    expect(c.srgb_hex).toBe('#ffffff');
    expect(c.in_gamut).toBe(true);
  });

  it('a grey reflector keeps the white chromaticity; Y = 18.42 % gives L* = 50 (CIE 15:2004 eq. 8.1: 116·0.1842^{1/3} − 16)', () => {
    const c = colourOf(
      COLOUR_GRID_NM.map(() => 0.18419),
      cieTables(),
    );
    expect(c.x).toBeCloseTo(0.3127, 4);
    expect(c.L).toBeCloseTo(50, 2);
    expect(c.srgb_hex).toBe('#777777'); // sRGB of L* = 50 grey, IEC 61966-2-1: 1.055·0.18419^{1/2.4} − 0.055 = 0.4663 → 119
  });

  it('black: no chromaticity, L* = 0, #000000; a saturated green is out of the sRGB gamut', () => {
    const black = colourOf(
      COLOUR_GRID_NM.map(() => 0),
      cieTables(),
    );
    expect(black.x).toBeNull();
    expect(black.L).toBe(0);
    expect(black.srgb_hex).toBe('#000000');
    const green = colourOf(
      COLOUR_GRID_NM.map((w) => (w >= 515 && w <= 525 ? 1 : 0)),
      cieTables(),
    );
    expect(green.in_gamut).toBe(false);
  });
});

describe('opaque layers', () => {
  it('a metal layer millimetres thick reflects like the bulk metal (Fresnel, Hecht ch. 4) and transmits nothing, with no NaN', () => {
    const n = 0.2,
      k = 3.4;
    const bulk = ((1 - n) ** 2 + k ** 2) / ((1 + n) ** 2 + k ** 2);
    for (const d of [1e4, 1e6, 3e6]) {
      const r = solveStack(
        { wavelengthNm: [500], ambient: air, layers: [layer(n, d, k), layer(1.5, 100), layer(n, d, k)], substrate: constant(1.5) },
        30,
      );
      for (const v of [r.Rs[0], r.Rp[0], r.Ts[0], r.Tp[0], r.psiDeg[0], r.deltaDeg[0]]) expect(Number.isFinite(v)).toBe(true);
      expect(r.Ts[0]).toBe(0); // behind two opaque layers
      const normal = solveStack({ wavelengthNm: [500], ambient: air, layers: [layer(n, d, k)], substrate: constant(1.5) }, 0);
      expect(normal.Rs[0]).toBeCloseTo(bulk, 12);
    }
  });
});
