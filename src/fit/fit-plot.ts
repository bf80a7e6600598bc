/**
 * The plot of a fit: measured n and k as points with the fitted curves, and a residual panel
 * (measured − model). Builds a PlotSpec for renderSpectrumPlot; pure, shared by the CLI and web pages.
 */
import type { PlotSpec } from '../plot/spectrum-plot.ts';
import type { NkTable } from '../table.ts';
import { evaluateFitReport } from './fit.ts';
import type { FitReport } from './types.ts';

/** Points of the smooth fitted curve across the fitted range. */
const CURVE_POINTS = 400;

export function fitPlotSpec(table: NkTable, report: FitReport, title?: string): PlotSpec {
  const [lo, hi] = report.range_nm;
  const rows = table.wavelengthNm.flatMap((nm, i) => (nm >= lo && nm <= hi ? [i] : []));
  const x = rows.map((i) => table.wavelengthNm[i]);
  const n = rows.map((i) => table.n[i]);
  const k = rows.map((i) => table.k[i]);
  const curveX = Array.from({ length: CURVE_POINTS }, (_, j) => lo + ((hi - lo) * j) / (CURVE_POINTS - 1));
  const curve = evaluateFitReport(report, curveX);
  const atRows = evaluateFitReport(report, x);
  const label = `${report.model} fit`;
  return {
    title: title ?? `${report.model} fit (${lo}–${hi} nm)`,
    xLabel: 'Wavelength (nm)',
    panels: [
      {
        yLabel: 'n',
        series: [
          { label: 'n measured', x, y: n, style: 'points' },
          { label, x: curveX, y: curve.n, style: 'line' },
        ],
      },
      {
        yLabel: 'k',
        series: [
          { label: 'k measured', x, y: k, style: 'points' },
          { label, x: curveX, y: curve.k, style: 'line' },
        ],
      },
      {
        yLabel: 'measured − model',
        relativeHeight: 0.6,
        zeroLine: true,
        series: [
          { label: 'n residual', x, y: n.map((v, i) => v - atRows.n[i]), style: 'points' },
          { label: 'k residual', x, y: k.map((v, i) => v - atRows.k[i]), style: 'points' },
        ],
      },
    ],
  };
}
