/**
 * Every demo material of data/marrowick converges from the automatic start and recovers the parameters
 * it was generated with (data/marrowick/truth.json, written by scripts/make-demo-data.py; invented data).
 */
import { describe, expect, it } from 'vitest';
import { evaluateFitReport, fitTable } from '../../src/fit/fit.ts';
import { buildModel } from '../../src/models/catalogue.ts';
import { loadTable } from '../../src/service/source.ts';
import truth from '../../data/marrowick/truth.json' with { type: 'json' };

interface Truth {
  model: string;
  terms?: number;
  parameters: Record<string, number>;
}

/**
 * mgf2: its k noise is clipped at 0 (truth.json), which biases the tiny Urbach tail (k ≈ 1e-5) upward;
 * k0 and Eu are therefore not expected back within their standard errors.
 */
const BIASED_BY_CLIPPING: Record<string, string[]> = { 'mgf2-evaporated.csv': ['k0', 'Eu'] };

const entries = Object.entries(truth).filter(([file]) => !file.startsWith('_')) as [string, Truth][];

describe('demo materials (data/marrowick, invented) fitted from defaults', () => {
  for (const [file, t] of entries) {
    it(`${file}: ${t.model} converges and recovers the generating parameters`, async () => {
      const { table } = await loadTable(`data/marrowick/${file}`);
      const urbach = 'k0' in t.parameters;
      const report = fitTable(table, { model: t.model, terms: t.terms, urbach, fix: urbach ? { Eb: t.parameters.Eb } : undefined });
      expect(report.warnings.join('\n')).not.toMatch(/without meeting the convergence tests/);
      for (const [name, value] of Object.entries(t.parameters)) {
        const p = report.parameters[name];
        if (p.stderr === null || BIASED_BY_CLIPPING[file]?.includes(name)) continue;
        expect(Math.abs(p.value - value), `${name} = ${p.value} ± ${p.stderr}, truth ${value}`).toBeLessThan(4 * p.stderr);
      }
      // the fitted curve follows the generating curve within the demo noise (≤ 1.5e-3 in n)
      const wl = table.wavelengthNm;
      const fitted = evaluateFitReport(report, wl);
      const exact = buildModel(t.model, { terms: t.terms, urbach }).nk(wl, t.parameters);
      const worstN = Math.max(...wl.map((_, i) => Math.abs(fitted.n[i] - exact.n[i])));
      const worstK = Math.max(...wl.map((_, i) => Math.abs(fitted.k[i] - exact.k[i])));
      expect(worstN).toBeLessThan(1.5e-3);
      expect(worstK).toBeLessThan(1.5e-3);
    });
  }
});
