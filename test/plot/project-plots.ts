/**
 * Test helper: every plot nkledger makes, built the way its commands build them, on the invented demo
 * data of data/marrowick: `fit --plot` (each demo file with the model it was generated with),
 * `kk --plot` (each demo file) and `diff --plot` (two versions in a temp registry). Titles are the
 * commands' own ("<model> fit of <file>", "Kramers-Kronig check of <file>", "<a> vs <b>").
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fitTable } from '../../src/fit/fit.ts';
import { fitPlotSpec } from '../../src/fit/fit-plot.ts';
import { checkKramersKronig } from '../../src/kk/check.ts';
import { kkPlotSpec } from '../../src/kk/plot-spec.ts';
import { renderSpectrumPlot, type PlotSpec } from '../../src/plot/spectrum-plot.ts';
import { createMaterial, diffPlotSpec, diffVersions, importVersion, openRegistry } from '../../src/service/registry.ts';
import { loadTable } from '../../src/service/source.ts';
import truth from '../../data/marrowick/truth.json' with { type: 'json' };

export interface ProjectPlot {
  /** File-name-safe name, e.g. "kk-ito-sputtered". */
  name: string;
  spec: PlotSpec;
  svg: string;
}

type Truth = { model: string; terms?: number; parameters: Record<string, number> };
const demo = Object.entries(truth).filter(([file]) => !file.startsWith('_')) as [string, Truth][];

const stem = (file: string) => file.replace(/\.[a-z]+$/, '');

/** Builds them all (fits take a few seconds in total). */
export async function projectPlots(): Promise<ProjectPlot[]> {
  const plots: ProjectPlot[] = [];
  const add = (name: string, spec: PlotSpec) => plots.push({ name, spec, svg: renderSpectrumPlot(spec) });
  const tables = new Map<string, Awaited<ReturnType<typeof loadTable>>['table']>();
  for (const [file, t] of demo) {
    const path = `data/marrowick/${file}`;
    const { table } = await loadTable(path);
    tables.set(file, table);
    const urbach = 'k0' in t.parameters;
    const report = fitTable(table, { model: t.model, terms: t.terms, urbach, fix: urbach ? { Eb: t.parameters.Eb } : undefined });
    add(`fit-${stem(file)}`, fitPlotSpec(table, report, `${report.model} fit of ${path}`));
    add(`kk-${stem(file)}`, kkPlotSpec(checkKramersKronig(table), `Kramers-Kronig check of ${path}`));
  }

  const dir = mkdtempSync(join(tmpdir(), 'nkledger-plots-'));
  const registry = await openRegistry(join(dir, 'plots.db'));
  try {
    await createMaterial(registry, { slug: 'sinx-pecvd', name: 'PECVD SiNx' }, 'ada');
    for (const file of ['sinx-pecvd-recipe-a.csv', 'sinx-pecvd-recipe-b.csv']) {
      const table = tables.get(file)!;
      await importVersion(registry, { slug: 'sinx-pecvd', table, fit: fitTable(table, { model: 'tauc-lorentz' }) }, 'ada');
    }
    add('diff-sinx-pecvd', diffPlotSpec(await diffVersions(registry, 'sinx-pecvd@1', 'sinx-pecvd@2')));
  } finally {
    await registry.close();
    rmSync(dir, { recursive: true, force: true });
  }
  return plots;
}
