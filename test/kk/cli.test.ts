/** `nkledger kk` end to end: text, --json, --plot, --tolerance and exit codes (0 / 3 / 2). */
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { XMLParser } from 'fast-xml-parser';
import { describe, expect, it } from 'vitest';
import { checkKramersKronig } from '../../src/kk/check.ts';
import { kkPlotSpec } from '../../src/kk/plot-spec.ts';
import { runCli } from '../cli/run-cli.ts';

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

  it('--plot writes an SVG with the measured n, the reconstructed n and Δn', async () => {
    const file = join(mkdtempSync(join(tmpdir(), 'nkledger-kk-')), 'kk.svg');
    expect((await run(csv('tauc-lorentz'), '--plot', file)).code).toBe(0);
    const svg = readFileSync(file, 'utf8');
    const doc = new XMLParser({ ignoreAttributes: false }).parse(svg);
    expect(doc.svg).toBeDefined();
    for (const label of ['n measured', 'n KK-reconstructed', 'Δn']) expect(svg).toContain(`data-label="${label}"`);
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
    expect(spec.panels[1].series[1].y).toEqual([report.tolerance, report.tolerance]);
  });
});
