import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { XMLParser } from 'fast-xml-parser';
import { describe, expect, it } from 'vitest';
import { fitTable } from '../../src/fit/fit.ts';
import { fitPlotSpec } from '../../src/fit/fit-plot.ts';
import { renderSpectrumPlot } from '../../src/plot/spectrum-plot.ts';
import { loadTable } from '../../src/service/source.ts';
import { runCli } from '../cli/run-cli.ts';

const nkledger = (args: string[]) => runCli(args);

const noStackTrace = (stderr: string) => expect(stderr).not.toMatch(/\n\s+at |node:internal/);

describe('nkledger fit end to end', () => {
  it('--json has exactly the issue-3 shape plus range_nm and options', async () => {
    const r = await nkledger(['fit', 'data/marrowick/sinx-pecvd-recipe-a.csv', '--model', 'tauc-lorentz', '--json']);
    expect(r.code).toBe(0);
    const report = JSON.parse(r.stdout);
    expect(Object.keys(report)).toEqual([
      'model',
      'parameters',
      'statistics',
      'correlations',
      'warnings',
      'diagnostics',
      'kk_consistent',
      'range_nm',
      'options',
    ]);
    expect(Object.keys(report.parameters)).toEqual(['A', 'E0', 'C', 'Eg', 'eps_inf']);
    expect(Object.keys(report.parameters.Eg)).toEqual(['value', 'stderr', 'unit', 'at_bound']);
    expect(Object.keys(report.statistics)).toEqual(['points', 'rms_n', 'rms_k', 'reduced_chi2', 'chi2_p', 'dof', 'aic', 'bic', 'iterations']);
    expect(report.parameters.Eg.unit).toBe('eV');
    expect(report.statistics.reduced_chi2).toBeGreaterThan(0.3); // the file has sigma columns
  });

  it('text output is a table with parameters, ± 1σ and units', async () => {
    const r = await nkledger(['fit', 'data/marrowick/al2o3-ald.csv', '--model', 'cauchy', '--urbach', '--fix', 'Eb=4']);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/parameter\s+value\s+± 1σ\s+unit/);
    expect(r.stdout).toMatch(/^Eb\s+4\s+eV\s+fixed$/m);
    expect(r.stdout).toMatch(/Kramers-Kronig consistent: NO/);
    expect(r.stderr).toMatch(/not Kramers-Kronig consistent/);
  });

  it('--compare prints AIC/BIC with the caveats beside them', async () => {
    const r = await nkledger(['fit', 'data/marrowick/sinx-pecvd-recipe-b.csv', '--compare', 'cauchy,sellmeier,tauc-lorentz']);
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/best by AIC: tauc-lorentz/);
    expect(r.stdout).toMatch(/caveats beside these numbers/);
  });

  it('refuses an unknown model or parameter with the valid list, exit code 2, no stack trace', async () => {
    const m = await nkledger(['fit', 'data/marrowick/sio2-thermal.csv', '--model', 'forouhi-bloomer']);
    expect(m.code).toBe(2);
    expect(m.stderr).toMatch(/valid models: cauchy, sellmeier, tauc-lorentz, lorentz, drude/);
    noStackTrace(m.stderr);
    const p = await nkledger(['fit', 'data/marrowick/sio2-thermal.csv', '--model', 'sellmeier', '--init', 'B9=1']);
    expect(p.code).toBe(2);
    expect(p.stderr).toMatch(/its parameters: A, B1, C1/);
    noStackTrace(p.stderr);
  });

  it('--help lists the catalogue with parameters and units', async () => {
    const r = await nkledger(['fit', '--help']);
    expect(r.code).toBe(0);
    for (const name of ['cauchy', 'sellmeier', 'tauc-lorentz', 'lorentz', 'drude']) expect(r.stdout).toContain(`  ${name}  `);
    expect(r.stdout).toMatch(/Eg\s+\[eV\]/);
  });

  it('--plot writes an SVG', async () => {
    const file = join(mkdtempSync(join(tmpdir(), 'nkledger-fit-')), 'fit.svg');
    const r = await nkledger(['fit', 'data/marrowick/ito-sputtered.tsv', '--model', 'tauc-lorentz+drude', '--plot', file]);
    expect(r.code).toBe(0);
    expect(readFileSync(file, 'utf8')).toMatch(/^<\?xml[\s\S]*<\/svg>\s*$/);
  });
});

describe('fit plot (SVG parsed with fast-xml-parser)', () => {
  it('has the title, labelled axes with units, legends and all series', async () => {
    const { table } = await loadTable('data/marrowick/sinx-pecvd-recipe-a.csv');
    const report = fitTable(table, { model: 'tauc-lorentz' });
    const svg = renderSpectrumPlot(fitPlotSpec(table, report, 'SiNx recipe A'));
    const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: '' }).parse(svg).svg;
    expect(doc.title).toBe('SiNx recipe A');
    const panels = [doc.g].flat().filter((g: { class: string }) => g.class === 'panel');
    expect(panels.map((p: Record<string, string>) => p['data-y-label'])).toEqual(['n', 'k', 'measured − model']);
    const xAxis = [doc.g].flat().find((g: { class: string }) => g.class === 'x-axis');
    expect(JSON.stringify(xAxis)).toContain('Wavelength (nm)');
    const series = panels.flatMap((p: { g: unknown }) => [p.g].flat().filter((g) => (g as { class: string }).class === 'series')) as Record<
      string,
      string
    >[];
    expect(series.map((s) => s['data-label'])).toEqual([
      'n measured',
      'tauc-lorentz fit',
      'k measured',
      'tauc-lorentz fit',
      'n residual',
      'k residual',
    ]);
    expect(Number(series[0]['data-count'])).toBe(table.wavelengthNm.length);
    const legends = panels.map((p: { g: unknown }) => JSON.stringify([p.g].flat().find((g) => (g as { class: string }).class === 'legend')));
    expect(legends[0]).toContain('n measured');
    expect(legends[2]).toContain('k residual');
  });
});
