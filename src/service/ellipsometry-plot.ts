/** Plot of an ellipsometry fit: measured (points) and modelled (lines) Ψ and Δ against wavelength, per angle. */
import { type PlotSeries, renderSpectrumPlot } from '../plot/spectrum-plot.ts';
import type { EllipsometryReport } from './ellipsometry.ts';

export function renderEllipsometryPlot(report: EllipsometryReport, title: string): string {
  // measured first and model second per angle, so each pair shares its colour order (src/plot keeps measured first)
  const panel = (what: 'psi' | 'delta'): PlotSeries[] =>
    report.curves.flatMap((c) => [
      { label: `measured ${c.angle_deg}°`, x: c.wavelength_nm, y: what === 'psi' ? c.psi_deg : c.delta_deg, style: 'points' as const },
      { label: `model ${c.angle_deg}°`, x: c.wavelength_nm, y: what === 'psi' ? c.model_psi_deg : c.model_delta_deg, style: 'line' as const },
    ]);
  return renderSpectrumPlot({
    title,
    xLabel: 'Wavelength (nm)',
    panels: [
      { yLabel: 'Ψ (°)', series: panel('psi') },
      { yLabel: 'Δ (°)', series: panel('delta') },
    ],
  });
}
