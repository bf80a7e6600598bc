import { describe, expect, it } from 'vitest';
import { fitTable, evaluateFitReport } from '../../src/fit/fit.ts';
import { buildModel } from '../../src/models/catalogue.ts';

// I. H. Malitson, J. Opt. Soc. Am. 55, 1205 (1965) (coefficients as in docs/references.md).
const MALITSON = { A: 1, B1: 0.6961663, C1: 0.0684043 ** 2, B2: 0.4079426, C2: 0.1162414 ** 2, B3: 0.8974794, C3: 9.896161 ** 2 };

describe('Malitson 1965 fused silica', () => {
  const wavelengthNm = Array.from({ length: 351 }, (_, i) => 210 + i * 10); // 0.21–3.71 µm, the paper's range
  const model = buildModel('sellmeier', { terms: 3 });
  const { n } = model.nk(wavelengthNm, MALITSON);

  it('the formula gives n_d(587.56 nm) = 1.4585 as the paper quotes', () => {
    expect(model.nk([587.56], MALITSON).n[0]).toBeCloseTo(1.4585, 4);
  });

  it('fitted back from the DEFAULT start values reproduces n to 1e-5 over 0.21–3.71 µm', () => {
    const report = fitTable({ wavelengthNm, n, k: n.map(() => 0) }, { model: 'sellmeier', terms: 3 });
    const fitted = evaluateFitReport(report, wavelengthNm);
    const worst = Math.max(...fitted.n.map((v, i) => Math.abs(v - n[i])));
    expect(worst).toBeLessThan(1e-5);
    expect(report.options.fixed).toEqual(['A']);
    expect(report.parameters.A.value).toBe(1);
  });
});
