/** `nkledger kk` end to end: text, --json, --plot, --tolerance and exit codes (0 / 3 / 2). */
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { checkKramersKronig } from '../../src/kk/check.ts';
import { kkPlotSpec } from '../../src/kk/plot-spec.ts';
import { runCli } from '../cli/run-cli.ts';
import { findAll, parseSvg } from '../plot/svg-tree.ts';

const run = (...args: string[]) => runCli(['kk', ...args]);
const csv = (name: string) => `test/fixtures/kk/${name}.csv`;

describe('nkledger kk', () => {
  it('prints the verdict and the misfit a person reads at a glance, exit 0 when consistent', async () => {
    const out = await run(csv('lorentz-pair'));
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(/CONSISTENT/);
    expect(out.stdout).toMatch(/max \d\.\de-\d at \d+(\.\d)? nm/);
    expect(out.stdout).toMatch(/visible/);
  });

  it('--json gives verdict, rms_dn, max_dn, worst_nm, tolerance; exit 3 when inconsistent', async () => {
    const out = await run(csv('lorentz-bump'), '--json');
    expect(out.code).toBe(3);
    const report = JSON.parse(out.stdout);
    expect(report.verdict).toBe('inconsistent');
    expect(Math.abs(report.worst_nm - 750)).toBeLessThanOrEqual(20);
    for (const key of ['rms_dn', 'max_dn', 'tolerance']) expect(typeof report[key]).toBe('number');
  });

  it('--tolerance changes the verdict; a bad tolerance is refused with exit 2', async () => {
    const loose = await run(csv('lorentz-bump'), '--json', '--tolerance', '0.05');
    expect(loose.code).toBe(0);
    expect(JSON.parse(loose.stdout)).toMatchObject({ verdict: 'consistent', tolerance: 0.05 });
    const bad = await run(csv('lorentz-bump'), '--tolerance', '-1');
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/--tolerance -1.*\[bad-option\]/);
    expect(bad.stderr).not.toMatch(/at .*\.ts:\d+/);
  });

  it('uninformative for k = 0 (exit 0), and a missing file is exit 2', async () => {
    const out = await run(csv('transparent'));
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(/UNINFORMATIVE/);
    expect((await run('test/fixtures/kk/no-such-file.csv')).code).toBe(2);
  });

  it('--plot writes a well-formed SVG: every row as a measured point, the reconstruction, Δn and the band', async () => {
    const file = join(mkdtempSync(join(tmpdir(), 'nkledger-kk-')), 'kk.svg');
    expect((await run(csv('tauc-lorentz'), '--plot', file)).code).toBe(0);
    const root = parseSvg(readFileSync(file, 'utf8')); // throws when malformed
    const rows =
      readFileSync(new URL(`../fixtures/kk/tauc-lorentz.csv`, import.meta.url), 'utf8')
        .trim()
        .split('\n').length - 1;
    expect(findAll(root, 'title')[0].text).toMatch(/^Kramers-Kronig check of test\/fixtures\/kk\/tauc-lorentz\.csv: consistent \(max \|Δn\| /);
    const [nPanel, dnPanel] = findAll(root, 'g', 'panel');
    const series = (panel: typeof root) =>
      findAll(panel, 'g', 'series').map((s) => [s.attrs['data-label'], s.attrs['data-style'], Number(s.attrs['data-count'])]);
    expect(series(nPanel)).toEqual([
      ['n measured', 'points', rows],
      ['n KK-reconstructed', 'line', rows],
    ]);
    expect(findAll(findAll(nPanel, 'g', 'series')[0], 'circle')).toHaveLength(rows);
    expect(series(dnPanel)).toEqual([
      ['Δn', 'line', rows],
      ['±tolerance 0.005', 'dashed', 4],
    ]);
  });
});

describe('kkPlotSpec', () => {
  it('puts n measured and reconstructed in one panel and Δn with the tolerance band in a second', async () => {
    const doc = JSON.parse(readFileSync(new URL('../fixtures/kk/lorentz-pair.json', import.meta.url), 'utf8'));
    const report = checkKramersKronig({ wavelengthNm: doc.wavelength_nm, n: doc.n, k: doc.k });
    const spec = kkPlotSpec(report);
    expect(spec.panels).toHaveLength(2);
    expect(spec.panels[0].series.map((s) => s.label)).toEqual(['n measured', 'n KK-reconstructed']);
    expect(spec.panels[0].series[0].y).toEqual(doc.n);
    expect(spec.panels[1].zeroLine).toBe(true);
    expect(spec.panels[1].series[0].y).toEqual(report.reconstructed.dn);
    // one band, one series: both edges, broken by a NaN so they are drawn as two lines in one style
    expect(spec.panels[1].series).toHaveLength(2);
    expect(spec.panels[1].series[1].y).toEqual([report.tolerance, report.tolerance, NaN, -report.tolerance, -report.tolerance]);
  });
});
