/**
 * The picture of a Kramers-Kronig check: measured n against the KK-reconstructed n, and the misfit Δn
 * with the ±tolerance band in a second panel. Pure: builds a PlotSpec for renderSpectrumPlot.
 */
import type { PlotSpec } from '../plot/spectrum-plot.ts';
import type { KkReport } from './check.ts';

export function kkPlotSpec(report: KkReport, title = 'Kramers-Kronig check'): PlotSpec {
  const r = report.reconstructed;
  const x = r.wavelength_nm;
  return {
    title: `${title}: ${report.verdict} (max |Δn| ${report.max_dn.toExponential(1)} at ${report.worst_nm.toFixed(1)} nm)`,
    xLabel: 'Wavelength (nm)',
    panels: [
      {
        yLabel: 'n',
        relativeHeight: 2,
        series: [
          { label: 'n measured', x, y: r.n_measured, style: 'points' },
          { label: 'n KK-reconstructed', x, y: r.n, style: 'line' },
        ],
      },
      {
        yLabel: 'Δn = measured − KK',
        zeroLine: true,
        series: [
          { label: 'Δn', x, y: r.dn, style: 'line' },
          // One band, one series: its two edges are one dashed line broken by a NaN, so one colour and one legend entry.
          {
            label: `±tolerance ${report.tolerance}`,
            x: [x[0], x[x.length - 1], Number.NaN, x[0], x[x.length - 1]],
            y: [report.tolerance, report.tolerance, Number.NaN, -report.tolerance, -report.tolerance],
            style: 'dashed',
          },
        ],
      },
    ],
  };
}
