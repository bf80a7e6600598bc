import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { fitTable } from '../../src/fit/fit.ts';
import { parseNkTable } from '../../src/io/parse-table.ts';
import type { NkTable } from '../../src/table.ts';
import {
  approve,
  createMaterial,
  diffVersions,
  evaluateVersion,
  exportVersion,
  importVersion,
  renderDiffPlot,
  versionSha256,
} from '../../src/service/registry.ts';
import { BACKENDS, tempRegistry, type TempRegistry } from './helpers.ts';
import { findAll, parseSvg } from '../plot/svg-tree.ts';
import { withUnitColumn } from '../../src/service/evaluate-version.ts';

/** Cauchy n = A + B/λ² (λ in µm) on 400…800 nm every 5 nm, k = 0, plus an optional Gaussian bump in n. */
function table(A: number, B: number, bump?: { amplitude: number; centreNm: number; widthNm: number }): NkTable {
  const wavelengthNm = Array.from({ length: 81 }, (_, i) => 400 + 5 * i);
  const n = wavelengthNm.map((w) => A + B / (w / 1000) ** 2 + (bump ? bump.amplitude * Math.exp(-(((w - bump.centreNm) / bump.widthNm) ** 2)) : 0));
  return { wavelengthNm, n, k: wavelengthNm.map(() => 0) };
}

describe.each(BACKENDS)('compare on %s', (backend) => {
  let t: TempRegistry;
  beforeEach(async () => {
    t = await tempRegistry(backend);
    await createMaterial(t.registry, { slug: 'sio2', name: 'SiO2' }, 'ada');
  });
  afterEach(() => t.cleanup());

  describe('diff', () => {
    it('finds the largest |Δn| where a known bump was added, and lists provenance changes', async () => {
      await importVersion(t.registry, { slug: 'sio2', table: table(1.45, 0.0036), provenance: { sample: 'W1' } }, 'ada');
      await importVersion(
        t.registry,
        { slug: 'sio2', table: table(1.45, 0.0036, { amplitude: 0.01, centreNm: 600, widthNm: 20 }), provenance: { sample: 'W2', operator: 'cy' } },
        'ada',
      );
      const d = await diffVersions(t.registry, 'sio2@1', 'sio2@2');
      // common practice: the difference of the two generating formulas is the bump itself, peak 0.01 at 600 nm
      expect(d.common_range_nm).toEqual([400, 800]);
      expect(d.dn!.max_abs).toBeCloseTo(0.01, 12);
      expect(d.dn!.at_nm).toBe(600);
      expect(d.dk!.max_abs).toBe(0);
      expect(d.identical_content).toBe(false);
      expect(d.provenance).toEqual([
        { field: 'sample', a: 'W1', b: 'W2' },
        { field: 'operator', a: null, b: 'cy' },
      ]);
      expect(d.warnings).toHaveLength(2); // both drafts
    });

    it('compares fitted parameters with Δ in combined standard errors and draws a three-panel plot', async () => {
      const fitA = fitTable(table(1.45, 0.0036), { model: 'cauchy' });
      const fitB = fitTable(table(1.46, 0.004), { model: 'cauchy' });
      // reference values: the generating coefficients (noise-free data, so the fit recovers them)
      expect(fitA.parameters.A.value).toBeCloseTo(1.45, 8);
      await importVersion(t.registry, { slug: 'sio2', table: table(1.45, 0.0036), fit: fitA }, 'ada');
      await importVersion(t.registry, { slug: 'sio2', table: table(1.46, 0.004), fit: fitB }, 'ada');
      const d = await diffVersions(t.registry, 'sio2@1', 'sio2@2');
      const A = d.parameters.find((p) => p.name === 'A')!;
      expect(A).toMatchObject({ unit: '1' });
      expect(A.delta!).toBeCloseTo(0.01, 8);
      const B = d.parameters.find((p) => p.name === 'B')!;
      expect(B.delta!).toBeCloseTo(0.0004, 8);
      // Δn = 0.01 + 0.0004/λ², largest at the shortest common wavelength, 400 nm: 0.01 + 0.0004/0.16 = 0.0125
      expect(d.dn!.at_nm).toBe(400);
      expect(d.dn!.max_abs).toBeCloseTo(0.0125, 7);
      const root = parseSvg(renderDiffPlot(d)); // throws when malformed
      expect(findAll(root, 'title')[0].text).toBe('sio2@1 vs sio2@2');
      const points = d.curves!.wavelength_nm.length;
      const panels = findAll(root, 'g', 'panel').map((p) => [
        p.attrs['data-y-label'],
        findAll(p, 'g', 'series').map((s) => `${s.attrs['data-label']} ${s.attrs['data-style']} ${s.attrs['data-count']}`),
      ]);
      expect(panels).toEqual([
        ['n', [`sio2@1 line ${points}`, `sio2@2 dashed ${points}`]],
        ['k', [`sio2@1 line ${points}`, `sio2@2 dashed ${points}`]],
        ['difference (b − a)', [`Δn line ${points}`, `Δk dashed ${points}`]],
      ]);
    });
  });

  describe('eval of registry versions', () => {
    it('evaluates a model-backed version anywhere in its validity range and refuses outside', async () => {
      const fit = fitTable(table(1.45, 0.0036), { model: 'cauchy' });
      await importVersion(t.registry, { slug: 'sio2', table: table(1.45, 0.0036), fit }, 'ada');
      await approve(t.registry, 'sio2@1', 'bob');
      const e = await evaluateVersion(t.registry, 'sio2', [402.5, 632.8]);
      expect(e).toMatchObject({ ref: 'sio2@1', source: 'model', model: 'cauchy', range_nm: [400, 800] });
      // from the generating formula n = 1.45 + 0.0036/λ²
      expect(e.n[1]).toBeCloseTo(1.45 + 0.0036 / 0.6328 ** 2, 8);
      expect(e.notices[0]).toMatch(/not a pin/);
      await expect(evaluateVersion(t.registry, 'sio2@1', [380])).rejects.toThrow(/outside the validity range .* 400–800 nm/);
      // With extrapolation allowed, the model is evaluated beyond its range and every such value is marked.
      const x = await evaluateVersion(t.registry, 'sio2@1', [380, 600, 900], { extrapolate: true });
      expect(x.extrapolated).toEqual([true, false, true]);
      expect(x.n[2]).toBeCloseTo(1.45 + 0.0036 / 0.9 ** 2, 8); // the same formula, beyond the fitted range
      expect(x.warnings.at(-1)).toMatch(/^2 value\(s\) extrapolated beyond the cauchy model's validity range 400–800 nm/);
      expect((await evaluateVersion(t.registry, 'sio2@1', [600])).extrapolated).toBeUndefined();
      expect(withUnitColumn(await evaluateVersion(t.registry, 'sio2@1', [619.920992]), 'eV')).toMatchObject({
        wavelength_nm: [619.920992],
        energy_eV: [2],
      });
    });

    it('interpolates a table-only version inside its measured range only', async () => {
      await importVersion(t.registry, { slug: 'sio2', table: table(1.45, 0.0036) }, 'ada');
      const e = await evaluateVersion(t.registry, 'sio2@1', [600]);
      expect(e).toMatchObject({ source: 'table', interpolation: 'linear' });
      expect(e.n[0]).toBeCloseTo(1.46, 12);
      await expect(evaluateVersion(t.registry, 'sio2@1', [850])).rejects.toThrow(/only interpolated, never extrapolated/);
      await expect(evaluateVersion(t.registry, 'sio2@1', [850], { extrapolate: true })).rejects.toThrow(/a table never extrapolates/);
    });
  });

  describe('export', () => {
    it('writes CSV that imports back to the same table, and JSON from which the hash recomputes', async () => {
      const original = table(1.45, 0.0036);
      const stored = await importVersion(t.registry, { slug: 'sio2', table: original, provenance: { instrument: 'SE-1' } }, 'ada');
      const csv = await exportVersion(t.registry, 'sio2@1', 'csv');
      expect(csv.text.split('\r\n')[0]).toBe(`# nkledger sio2@1 (draft) sha256:${stored.sha256}`);
      const back = parseNkTable(csv.text, { file: 'export.csv' }).table;
      expect(back.wavelengthNm).toEqual(original.wavelengthNm);
      expect(back.n).toEqual(original.n);
      const json = JSON.parse((await exportVersion(t.registry, 'sio2@1', 'json')).text);
      expect(versionSha256(json.content, json.provenance)).toBe(stored.sha256);
    });

    it('exports a model-only version on a grid over its validity range', async () => {
      const fit = fitTable(table(1.45, 0.0036), { model: 'cauchy' });
      await importVersion(t.registry, { slug: 'sio2', fit }, 'ada');
      const lines = (await exportVersion(t.registry, 'sio2@1', 'csv', { stepNm: 100 })).text.trim().split('\r\n');
      expect(lines[1]).toMatch(/cauchy model evaluated every 100 nm/);
      expect(lines.slice(3).map((l) => Number(l.split(',')[0]))).toEqual([400, 500, 600, 700, 800]);
    });
  });
});
