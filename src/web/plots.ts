/**
 * The plots of the pages, from the project's plot specs (src/fit/fit-plot.ts, src/kk/plot-spec.ts,
 * src/service/diff-plot.ts) rendered by src/plot. Tables are decimated for display so that a page stays
 * light (a few hundred marks per series); the downloads keep every point.
 */
import { fitPlotSpec } from '../fit/fit-plot.ts';
import type { FitReport } from '../fit/types.ts';
import type { KkReport } from '../kk/check.ts';
import { kkPlotSpec } from '../kk/plot-spec.ts';
import { renderSpectrumPlot, type PlotSpec } from '../plot/spectrum-plot.ts';
import type { NkTable } from '../table.ts';

/** Most points of a measured series drawn on a page. */
export const DISPLAY_POINTS = 240;
/** Points of a smooth curve (a model, an interpolated table) drawn on a page. */
export const CURVE_POINTS = 300;

/** Indices of at most `max` rows spread evenly over `length`, first and last included. */
export function decimatedRows(length: number, max = DISPLAY_POINTS): number[] {
  if (length <= max) return Array.from({ length }, (_, i) => i);
  const rows = Array.from({ length: max }, (_, j) => Math.round((j * (length - 1)) / (max - 1)));
  return [...new Set(rows)];
}

function pick<T>(values: T[] | undefined, rows: number[]): T[] | undefined {
  return values && rows.map((i) => values[i]);
}

export function decimateTable(table: NkTable, max = DISPLAY_POINTS): NkTable {
  const rows = decimatedRows(table.wavelengthNm.length, max);
  if (rows.length === table.wavelengthNm.length) return table;
  return {
    wavelengthNm: pick(table.wavelengthNm, rows)!,
    n: pick(table.n, rows)!,
    k: pick(table.k, rows)!,
    sigmaN: pick(table.sigmaN, rows),
    sigmaK: pick(table.sigmaK, rows),
  };
}

/** Measured vs model with residuals. */
export function fitPlot(table: NkTable, report: FitReport, title: string): string {
  return renderSpectrumPlot(fitPlotSpec(decimateTable(table), report, title));
}

/** The KK check's plot, or null when the stored report has no reconstruction (e.g. a table without k). */
export function kkPlot(report: KkReport): string | null {
  const r = report.reconstructed;
  if (!r || !Array.isArray(r.wavelength_nm) || r.wavelength_nm.length < 2) return null;
  const rows = decimatedRows(r.wavelength_nm.length);
  const reconstructed = {
    wavelength_nm: pick(r.wavelength_nm, rows)!,
    n_measured: pick(r.n_measured, rows)!,
    n: pick(r.n, rows)!,
    k: pick(r.k, rows)!,
    dn: pick(r.dn, rows)!,
  };
  return renderSpectrumPlot(kkPlotSpec({ ...report, reconstructed }));
}

/** n and k of one version (already evaluated on a grid), two panels sharing the wavelength axis. */
export function nkPlot(title: string, curve: { wavelength_nm: number[]; n: number[]; k: number[] }, label: string): string {
  const x = curve.wavelength_nm;
  const spec: PlotSpec = {
    title,
    xLabel: 'Wavelength (nm)',
    height: 420,
    panels: [
      { yLabel: 'n', series: [{ label: `n ${label}`, x, y: curve.n, style: 'line' }] },
      { yLabel: 'k', series: [{ label: `k ${label}`, x, y: curve.k, style: 'line' }] },
    ],
  };
  return renderSpectrumPlot(spec);
}

/** Wavelengths for a smooth curve over [lo, hi]. */
export function curveGrid(lo: number, hi: number, points = CURVE_POINTS): number[] {
  return Array.from({ length: points }, (_, j) => lo + ((hi - lo) * j) / (points - 1));
}
