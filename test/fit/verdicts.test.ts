/**
 * Fit verdicts outside the easy cases: starts inside each model's domain, k rows of models with k ≡ 0,
 * optima on a bound (against scipy's trf), too few points, and the goodness-of-fit warnings.
 * Synthetic tables are invented test data; the demo files are invented (data/README.md).
 */
import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/errors.ts';
import { fitTable } from '../../src/fit/fit.ts';
import { buildModel } from '../../src/models/catalogue.ts';
import { seededNormal } from '../../src/fit/random.ts';
import { loadTable } from '../../src/service/source.ts';
import type { NkTable } from '../../src/table.ts';
import bounded from '../reference/fit-bounded.json' with { type: 'json' };

const normal = seededNormal;

const TL = { A: 122.0, E0: 3.45, C: 2.54, Eg: 1.2, eps_inf: 1.15 };
function tlTable(rows = 120, sigma?: { n: (v: number) => number; k: (v: number) => number }, withSigma = true, seed = 5): NkTable {
  const wavelengthNm = Array.from({ length: rows }, (_, i) => 250 + (1350 * i) / Math.max(1, rows - 1));
  const exact = buildModel('tauc-lorentz').nk(wavelengthNm, TL);
  const z = normal(seed);
  const sn = sigma?.n ?? (() => 1e-3);
  const sk = sigma?.k ?? (() => 5e-4);
  const t: NkTable = { wavelengthNm, n: exact.n.map((v) => v + sn(v) * z()), k: exact.k.map((v) => v + sk(v) * z()) };
  if (withSigma) {
    t.sigmaN = exact.n.map(sn);
    t.sigmaK = exact.k.map(sk);
  }
  return t;
}
const rules = (r: { diagnostics?: { rule: string }[] }) => (r.diagnostics ?? []).map((d) => d.rule);

describe('multi-start stays inside the model domain', () => {
  it('the ITO demo with tauc-lorentz+drude and 10 starts runs (was: aborted on C ≥ 2·E0)', async () => {
    const { table } = await loadTable('data/marrowick/ito-sputtered.tsv');
    const r = fitTable(table, { model: 'tauc-lorentz+drude', starts: 10 });
    expect(r.multistart?.starts).toBe(10);
    expect(r.multistart!.reached_best).toBeGreaterThanOrEqual(1);
  });

  it('the catalogue declares C < 2·E0 for every Tauc-Lorentz oscillator', () => {
    const m = buildModel('tauc-lorentz', { terms: 2 });
    expect(m.constraints.map((c) => c.rule)).toEqual(['C1 < 2·E01', 'C2 < 2·E02']);
    expect(m.violated([1, 2, 4.5, 1, 3, 2, 1, 1])?.rule).toBe('C1 < 2·E01');
  });
});

describe('models with k ≡ 0 do not count the k rows', () => {
  it('sio2 demo: Sellmeier on n,k reports the same points, χ² scale and standard errors as --target n', async () => {
    const { table } = await loadTable('data/marrowick/sio2-thermal.csv');
    const a = fitTable(table, { model: 'sellmeier', terms: 2 });
    const b = fitTable(table, { model: 'sellmeier', terms: 2, target: 'n' });
    expect(a.statistics.points).toBe(table.wavelengthNm.length);
    expect(a.statistics.points).toBe(b.statistics.points);
    expect(a.statistics.aic).toBeCloseTo(b.statistics.aic, 6);
    for (const p of ['B1', 'C1', 'B2', 'C2']) expect(a.parameters[p].stderr).toBeCloseTo(b.parameters[p].stderr as number, 12);
  });

  it('a table with sigma_n only is weighted for such a model', () => {
    const wavelengthNm = Array.from({ length: 60 }, (_, i) => 300 + 20 * i);
    const { n } = buildModel('cauchy').nk(wavelengthNm, { A: 1.45, B: 0.004, C: 0 });
    const z = normal(3);
    const r = fitTable({ wavelengthNm, n: n.map((v) => v + 1e-4 * z()), k: n.map(() => 0), sigmaN: n.map(() => 1e-4) }, { model: 'cauchy' });
    expect(r.options.weighted).toBe(true);
    expect(r.statistics.reduced_chi2).not.toBeNull();
  });

  it('k alone cannot be fitted by such a model', () => {
    expect(() => fitTable(tlTable(), { model: 'cauchy', target: 'k' })).toThrow(/k ≡ 0/);
  });
});

interface BoundedCase {
  name: string;
  model: string;
  start: Record<string, number>;
  bounds: Record<string, [number, number]>;
  wavelength_nm: number[];
  n: number[];
  k: number[];
  sigma_n: number;
  sigma_k: number;
  optimum: { chi2: number; active: string[]; parameters: Record<string, number> };
}

describe('optima on a bound reach scipy least_squares(method="trf", bounds) (scripts/make-bounded-fit-reference.py)', () => {
  it('fixture names scipy 1.17.1', () => expect(bounded.source).toMatch(/scipy 1\.17\.1/));
  for (const c of bounded.cases as unknown as BoundedCase[]) {
    it(`${c.name}: χ² within 0.1 % of scipy's, bound parameters without stderr`, () => {
      const table: NkTable = { wavelengthNm: c.wavelength_nm, n: c.n, k: c.k, sigmaN: c.n.map(() => c.sigma_n), sigmaK: c.k.map(() => c.sigma_k) };
      const r = fitTable(table, { model: c.model, init: c.start, bounds: c.bounds });
      const chi2 = (r.statistics.reduced_chi2 as number) * (r.statistics.dof as number);
      expect(chi2 / c.optimum.chi2).toBeLessThan(1.001);
      for (const [name, p] of Object.entries(r.parameters)) {
        if (p.at_bound) {
          expect(p.stderr, name).toBeNull();
          expect(r.correlations.parameters).not.toContain(name);
        }
      }
      // the bound scipy's optimum rests on that also decides the fit (lorentz.Gamma: a local minimum in both)
      const held = Object.entries(r.parameters)
        .filter(([, p]) => p.at_bound)
        .map(([n]) => n);
      expect(held.length).toBeGreaterThan(0);
      expect(r.warnings.join(' ')).toMatch(/ended on its (lower|upper) bound/);
    });
  }
});

describe('too few points', () => {
  it('refuses residuals that do not outnumber the free parameters, worded for a table without --range', () => {
    const t = tlTable(2);
    let err: unknown;
    try {
      fitTable(t, { model: 'tauc-lorentz' });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(InputError);
    expect((err as InputError).message).not.toMatch(/Infinity|--range/);
    const cauchyTwoRows = { wavelengthNm: [400, 500, 600], n: [1.5, 1.49, 1.48], k: [0, 0, 0] };
    expect(() => fitTable(cauchyTwoRows, { model: 'cauchy' })).toThrow(expect.objectContaining({ rule: 'too-few-points' }));
  });

  it('warns when the degrees of freedom are fewer than twice the free parameters', () => {
    const r = fitTable(tlTable(6, undefined, true, 9), { model: 'tauc-lorentz', init: TL });
    expect(rules(r)).toContain('few-dof');
  });
});

describe('goodness-of-fit warnings', () => {
  it('χ² improbable at p < 0.001 (sigmas 10× too small) is said, with the p-value', () => {
    const t = tlTable();
    t.sigmaN = t.sigmaN!.map((s) => s / 10);
    t.sigmaK = t.sigmaK!.map((s) => s / 10);
    const r = fitTable(t, { model: 'tauc-lorentz' });
    expect(r.statistics.chi2_p).toBeLessThan(1e-3);
    expect(rules(r)).toContain('poor-fit');
  });

  it('an honest fit raises none of them', () => {
    const r = fitTable(tlTable(), { model: 'tauc-lorentz' });
    expect(r.statistics.chi2_p).toBeGreaterThan(1e-3);
    expect(rules(r)).not.toContain('poor-fit');
    expect(rules(r)).not.toContain('structured-residuals');
  });

  it('a wrong model leaves structured residuals (runs test)', () => {
    const r = fitTable(tlTable(200, undefined, false), { model: 'cauchy', urbach: true });
    expect(rules(r)).toContain('structured-residuals');
  });

  it('noise that grows with the value is detected without sigma columns, and relative weights take it', () => {
    const grows = { n: (v: number) => 0.004 * Math.abs(v) ** 3, k: (v: number) => 0.004 * Math.abs(v) + 1e-5 };
    const t = tlTable(300, grows, false, 11);
    const plain = fitTable(t, { model: 'tauc-lorentz' });
    expect(rules(plain)).toContain('heteroscedastic');
    const relative = fitTable(t, { model: 'tauc-lorentz', weights: 'relative' });
    expect(relative.options.weights).toBe('relative');
    expect(rules(relative)).not.toContain('heteroscedastic');
  });

  it('two Sellmeier terms on one resonance are named (sio2 demo, 3 terms)', async () => {
    const { table } = await loadTable('data/marrowick/sio2-thermal.csv');
    const r = fitTable(table, { model: 'sellmeier', terms: 3 });
    const d = r.diagnostics!.find((x) => x.rule === 'degenerate-terms');
    expect(d?.message).toMatch(/two sellmeier terms describe one resonance: B1 and B2/);
    expect(d?.option).toBe('terms');
  });
});

describe('ε fits use the file’s σε directly', () => {
  it('an ε table with sigma_eps1/sigma_eps2 weights ε1, ε2 by exactly those sigmas', async () => {
    const { parseNkTable } = await import('../../src/io/parse-table.ts');
    const { buildProblem } = await import('../../src/fit/problem.ts');
    const e = Array.from({ length: 80 }, (_, i) => 1.5 + i * 0.04);
    const eps = buildModel('tauc-lorentz').eps(e, TL);
    const text =
      'energy_eV,eps1,eps2,sigma_eps1,sigma_eps2\n' +
      e.map((x, i) => `${x},${eps.eps1[i]},${eps.eps2[i]},${0.01 + 0.001 * i},0.02`).join('\n') +
      '\n';
    const { table } = parseNkTable(text, { file: 'eps.csv' });
    expect(table.sigmaEps1).toBeDefined();
    const problem = buildProblem(table, 'eps');
    const rows = table.wavelengthNm.length;
    // rows are in ascending wavelength, i.e. descending energy: row j is energy index rows − 1 − j
    for (let j = 0; j < rows; j++) {
      expect(1 / problem.invSigma[j]).toBeCloseTo(0.01 + 0.001 * (rows - 1 - j), 12);
      expect(1 / problem.invSigma[rows + j]).toBeCloseTo(0.02, 12);
    }
  });
});

describe('--compare prefers fewer parameters when BIC cannot tell', () => {
  it('BIC within 2 of the lowest: the candidate with fewer free parameters is named', async () => {
    const { bestByBic } = await import('../../src/fit/compare.ts');
    expect(
      bestByBic([
        { model: 'sellmeier', bic: -100, free_parameters: 6 },
        { model: 'cauchy', bic: -98.5, free_parameters: 3 },
      ]),
    ).toBe('cauchy');
    expect(
      bestByBic([
        { model: 'sellmeier', bic: -100, free_parameters: 6 },
        { model: 'cauchy', bic: -97.5, free_parameters: 3 },
      ]),
    ).toBe('sellmeier');
  });
});
