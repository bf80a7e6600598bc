/**
 * The ellipsometry fit checked against the outside world:
 * - Ψ, Δ of the sample descriptions at their generating values against the independent numpy implementation
 *   (scripts/make-ellipsometry-reference.py → test/reference/ellipsometry-numpy.json; numpy/scipy versions inside);
 * - synthetic data with seeded noise from the same script: the thermal SiO2 film of Malitson's 1965 Sellmeier
 *   coefficients recovered within 0.2 nm and n(632.8 nm) within 1e-3, the Tauc-Lorentz film under a roughness
 *   layer recovered within 3σ, a 4 nm film flagged as thickness–index correlated (common practice);
 * - a bare substrate against the closed-form Fresnel coefficients and the pseudo-dielectric-function inversion
 *   (H. Fujiwara, Spectroscopic Ellipsometry: Principles and Applications, Wiley 2007, ch. 2 and §5.1; from memory).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { angleDifference } from '../../src/fit/ellipsometry.ts';
import { buildModel } from '../../src/models/catalogue.ts';
import { answerOf, fitEllipsometry, prepareEllipsometry, resolveSample } from '../../src/service/ellipsometry.ts';
import { computeStack } from '../../src/service/stack.ts';
import { parseStackDesign } from '../../src/service/stack-design.ts';
import { solveStack } from '../../src/stack/transfer-matrix.ts';
import { refusalAsync as refusalOf } from './refusals.ts';

const FIX = 'test/fixtures/ellipsometry/';
const REF = JSON.parse(readFileSync(new URL('../reference/ellipsometry-numpy.json', import.meta.url), 'utf8'));

async function prepared(name: string) {
  const sampleFile = `${FIX}${name}.sample.json`;
  const dataFile = `${FIX}${name}.psi-delta.${name === 'sinx-rough' ? 'csv' : 'txt'}`;
  return prepareEllipsometry({
    data: { bytes: readFileSync(dataFile), file: dataFile },
    sample: { text: readFileSync(sampleFile, 'utf8'), file: sampleFile },
    resolve: { allowFiles: true },
  });
}

/** The sample with its free parameters set to given values, as a design for computeStack. */
async function designWith(name: string, values: Record<string, number>) {
  const sampleFile = `${FIX}${name}.sample.json`;
  const design = JSON.parse(readFileSync(sampleFile, 'utf8'));
  for (const layer of design.layers) {
    const prefix = design.layers.filter((l: { fit?: string[] }) => l.fit).length > 1 ? `${layer.name}.` : '';
    for (const [key, value] of Object.entries(values)) {
      if (!key.startsWith(prefix)) continue;
      const param = key.slice(prefix.length);
      if (param === 'thickness_nm') layer.thickness_nm = value;
      else if (layer.material.parameters && param in layer.material.parameters) layer.material.parameters[param] = value;
    }
  }
  const sample = await resolveSample(parseStackDesign(design, sampleFile), { designFile: sampleFile, designText: null, allowFiles: true });
  return sample.design;
}

describe('Ψ, Δ forward values against the numpy reference', () => {
  const cases: Array<[string, Record<string, number>]> = [
    ['sio2-malitson', { thickness_nm: 102.3, B1: 0.6961663 }],
    ['sio2-thin', { thickness_nm: 4, B1: 0.6961663 }],
    [
      'sinx-rough',
      {
        'roughness.thickness_nm': 3,
        'film.thickness_nm': 85,
        'film.A': 120,
        'film.E0': 8.5,
        'film.C': 3.2,
        'film.Eg': 3.4,
        'film.eps_inf': 2.1,
      },
    ],
  ];
  for (const [name, values] of cases) {
    it(`${name} (numpy ${REF.versions.numpy})`, async () => {
      const ref = REF.cases[name];
      const design = await designWith(name, values);
      const report = computeStack(design, {
        wavelengthNm: ref.wavelength_nm,
        anglesDeg: ref.clean.map((c: { angle_deg: number }) => c.angle_deg),
        polarization: 'unpolarized',
        extrapolate: false,
        sweep: null,
      });
      let worst = 0;
      report.results.forEach((r, a) => {
        r.psi_deg.forEach((psi, i) => {
          worst = Math.max(worst, Math.abs(psi - ref.clean[a].psi_deg[i]), Math.abs(angleDifference(r.delta_deg[i], ref.clean[a].delta_deg[i])));
        });
      });
      // Malitson's C3 and the substrate table pass through 6-decimal text; the engines agree far below the noise
      expect(worst).toBeLessThan(1e-6);
    });
  }
});

describe('recovery from synthetic data with noise', () => {
  it('thermal SiO2 (Malitson 1965) on a tabulated substrate: thickness within 0.2 nm, n(632.8 nm) within 1e-3', async () => {
    const p = await prepared('sio2-malitson');
    const steps: Array<{ phase: string; done: number }> = [];
    const report = fitEllipsometry(p.sample, p.data.data, { starts: 5, extrapolate: false }, (s) => steps.push(s));
    // progress: each screened start announced in order, then the full fit
    const announced = steps.filter((s, i) => i === 0 || s.phase !== steps[i - 1].phase || s.done !== steps[i - 1].done);
    expect(announced.map((s) => `${s.phase} ${s.done}`)).toEqual([
      'screening 0',
      'screening 1',
      'screening 2',
      'screening 3',
      'screening 4',
      'fit 0',
    ]);
    const truth = REF.cases['sio2-malitson'];
    const t = report.parameters.thickness_nm;
    expect(Math.abs(t.value - truth.thickness_nm)).toBeLessThan(0.2);
    expect(Math.abs(t.value - truth.thickness_nm)).toBeLessThan(3 * t.stderr!);
    const film = p.sample.design.layers[0].material.model!;
    const n = buildModel('sellmeier', { terms: 3 }).nk([632.8], { ...film.parameters, B1: report.parameters.B1.value }).n[0];
    expect(Math.abs(n - truth.n_632_8)).toBeLessThan(1e-3);
    // σ columns of the file: χ²/dof near 1 for the noise the script added
    expect(report.weights).toEqual({ sigma_psi_deg: 'file', sigma_delta_deg: 'file' });
    expect(report.statistics.reduced_chi2).toBeGreaterThan(0.8);
    expect(report.statistics.reduced_chi2).toBeLessThan(1.25);
    expect(report.statistics.rms_delta_deg).toBeCloseTo(0.03, 2);
    // five starts across one period, screened; the full fit starts from the best of them
    expect(report.multistart.screened.length).toBe(5);
    expect(report.multistart.screened[0].start).toBe(95);
    expect(Math.abs(report.multistart.period_nm! - 292)).toBeLessThan(10); // λ/(2√(n² − sin²θ)) at 650 nm, 70°, n ≈ 1.457
    const screenedBest = report.multistart.screened.reduce((a, b) => (b.chi2! < a.chi2! ? b : a));
    expect(report.multistart.best_start).toBe(screenedBest.start);
  });

  it('Tauc-Lorentz film under a Bruggeman roughness layer: every parameter within 3σ of the generating value', async () => {
    const p = await prepared('sinx-rough');
    const report = fitEllipsometry(p.sample, p.data.data, { starts: 1, extrapolate: false });
    const truth = REF.cases['sinx-rough'].parameters;
    const expected: Record<string, number> = {
      'roughness.thickness_nm': truth.roughness_nm,
      'film.thickness_nm': truth.thickness_nm,
      'film.A': truth.A,
      'film.E0': truth.E0,
      'film.C': truth.C,
      'film.Eg': truth.Eg,
      'film.eps_inf': truth.eps_inf,
    };
    for (const [name, value] of Object.entries(expected)) {
      const fitted = report.parameters[name];
      expect(Math.abs(fitted.value - value), name).toBeLessThan(3 * fitted.stderr!);
    }
    // no σ columns: the documented defaults
    expect(report.weights).toEqual({ sigma_psi_deg: 0.05, sigma_delta_deg: 0.1 });
    expect(report.correlations.parameters).toEqual(Object.keys(expected));
  });

  it('a 4 nm film: thickness and index strongly correlated, and the report says so', async () => {
    const p = await prepared('sio2-thin');
    const report = answerOf(p, fitEllipsometry(p.sample, p.data.data, { starts: 3, extrapolate: false }));
    expect(report.parameters.thickness_nm.value).toBeGreaterThan(3);
    expect(report.parameters.thickness_nm.value).toBeLessThan(5);
    const pair = report.correlations.high.find((h) => h.a === 'thickness_nm' && h.b === 'B1');
    expect(Math.abs(pair!.r)).toBeGreaterThan(0.99);
    expect(report.warnings.map((w) => w.rule)).toEqual(expect.arrayContaining(['strong-correlation', 'thin-film']));
    expect(report.warnings.find((w) => w.rule === 'thin-film')).toMatchObject({ parameter: 'thickness_nm' });
  });
});

describe('a bare substrate against the closed form', () => {
  // Complex arithmetic as [re, im].
  type C = [number, number];
  const mul = (a: C, b: C): C => [a[0] * b[0] - a[1] * b[1], a[0] * b[1] + a[1] * b[0]];
  const div = (a: C, b: C): C => {
    const d = b[0] * b[0] + b[1] * b[1];
    return [(a[0] * b[0] + a[1] * b[1]) / d, (a[1] * b[0] - a[0] * b[1]) / d];
  };
  const add = (a: C, b: C): C => [a[0] + b[0], a[1] + b[1]];
  const sub = (a: C, b: C): C => [a[0] - b[0], a[1] - b[1]];
  const sqrt = (a: C): C => {
    const r = Math.hypot(a[0], a[1]);
    const re = Math.sqrt((r + a[0]) / 2);
    const im = Math.sign(a[1]) * Math.sqrt((r - a[0]) / 2);
    return [re, im];
  };

  it('Ψ, Δ from the Fresnel coefficients, and <ε> = sin²θ[1 + tan²θ((1 − ρ)/(1 + ρ))²] gives back N²', () => {
    for (const [n, k] of [
      [3.9, 0.02],
      [1.5, 0],
      [0.2, 3.4],
    ]) {
      for (const theta of [45, 70, 75]) {
        const s = solveStack({ wavelengthNm: [633], ambient: { n: [1], k: [0] }, layers: [], substrate: { n: [n], k: [k] } }, theta);
        const N: C = [n, -k]; // N = n − ik
        const sin = Math.sin((theta * Math.PI) / 180);
        const cos: C = [Math.cos((theta * Math.PI) / 180), 0];
        const cos1 = sqrt(sub([1, 0], div([sin * sin, 0], mul(N, N)))); // cos θ₁ from Snell, N sin θ₁ = sin θ
        // Azzam & Bashara / Fujiwara: rp = (N cos θ₀ − cos θ₁)/(N cos θ₀ + cos θ₁), rs = (cos θ₀ − N cos θ₁)/(cos θ₀ + N cos θ₁)
        const rp = div(sub(mul(N, cos), cos1), add(mul(N, cos), cos1));
        const rs = div(sub(cos, mul(N, cos1)), add(cos, mul(N, cos1)));
        const rho = div(rp, rs);
        const psi = (Math.atan(Math.hypot(rho[0], rho[1])) * 180) / Math.PI;
        const delta = ((((Math.atan2(rho[1], rho[0]) * 180) / Math.PI) % 360) + 360) % 360;
        expect(s.psiDeg[0]).toBeCloseTo(psi, 10);
        expect(Math.abs(angleDifference(s.deltaDeg[0], delta))).toBeLessThan(1e-9);
        if (k > 0) {
          expect(s.deltaDeg[0]).toBeGreaterThan(0); // Azzam & Bashara: 0 < Δ < 180° on a bare absorbing substrate
          expect(s.deltaDeg[0]).toBeLessThan(180);
        }
        // pseudo-dielectric function from the engine's own Ψ, Δ
        const t = Math.tan((theta * Math.PI) / 180) ** 2;
        const r: C = [
          Math.tan((s.psiDeg[0] * Math.PI) / 180) * Math.cos((s.deltaDeg[0] * Math.PI) / 180),
          Math.tan((s.psiDeg[0] * Math.PI) / 180) * Math.sin((s.deltaDeg[0] * Math.PI) / 180),
        ];
        const q = div(sub([1, 0], r), add([1, 0], r));
        const eps = mul([sin * sin, 0], add([1, 0], mul([t, 0], mul(q, q))));
        const expected = mul(N, N);
        expect(eps[0]).toBeCloseTo(expected[0], 8);
        expect(eps[1]).toBeCloseTo(expected[1], 8);
      }
    }
  });

  it('Δ differences are the shortest angle', () => {
    expect(angleDifference(359, 1)).toBe(-2);
    expect(angleDifference(1, 359)).toBe(2);
    expect(angleDifference(180, 0)).toBe(180);
    expect(angleDifference(0, 180)).toBe(180);
    expect(angleDifference(10, 370)).toBeCloseTo(0, 12);
  });
});

describe('sample descriptions: refusals point into the file', () => {
  const base = {
    layers: [
      {
        material: { model: 'cauchy', parameters: { A: 1.46, B: 0.004, C: 0 } },
        thickness_nm: 100,
        fit: ['thickness_nm', 'A'],
      },
    ],
    substrate: { material: { n: 3.9, k: 0.02 } },
  };
  const resolve = (design: unknown) => {
    const text = JSON.stringify(design, null, 2);
    return resolveSample(parseStackDesign(text, 'sample.json'), { designFile: 'sample.json', designText: text, allowFiles: false });
  };
  const cases: Array<[string, (d: typeof base) => unknown, string, string]> = [
    ['an unknown parameter', (d) => ({ ...d, layers: [{ ...d.layers[0], fit: ['thickness_nm', 'E0'] }] }), 'sample-fit-parameter', 'layers.0.fit.1'],
    ['nothing to fit', (d) => ({ ...d, layers: [{ ...d.layers[0], fit: [] }] }), 'sample-nothing-to-fit', 'layers'],
    [
      'a start outside its bounds',
      (d) => ({ ...d, layers: [{ ...d.layers[0], bounds: { thickness_nm: [0, 50] } }] }),
      'sample-bounds',
      'layers.0.bounds.thickness_nm',
    ],
    [
      'bounds for a parameter not fitted',
      (d) => ({ ...d, layers: [{ ...d.layers[0], bounds: { B: [0, 1] } }] }),
      'sample-bounds',
      'layers.0.bounds.B',
    ],
    [
      'a layer source naming no layer',
      (d) => ({
        ...d,
        layers: [{ material: { mix: 'bruggeman', materials: [{ layer: 3 }, { n: 1 }], fraction: 0.5 }, thickness_nm: 2 }, ...d.layers],
      }),
      'design-layer-source',
      'layers.0.material.materials.0.layer',
    ],
    [
      'a layer source naming its own layer',
      (d) => ({
        ...d,
        layers: [{ material: { mix: 'bruggeman', materials: [{ layer: 1 }, { n: 1 }], fraction: 0.5 }, thickness_nm: 2 }, ...d.layers],
      }),
      'design-layer-source',
      'layers.0.material.materials.0.layer',
    ],
  ];
  for (const [what, change, rule, field] of cases) {
    it(what, async () => {
      const err = await refusalOf(() => resolve(change(structuredClone(base))));
      expect(err.rule).toBe(rule);
      expect(err.location).toMatchObject({ file: 'sample.json', field });
      expect(err.location.line).toBeGreaterThan(1);
    });
  }
});
