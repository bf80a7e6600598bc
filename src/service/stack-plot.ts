/** Plots of a stack report: R, T, A and Ψ, Δ against wavelength (renderSpectrumPlot), or the sweep's colour strips. */
import { renderColourStrips } from '../plot/colour-strip.ts';
import { renderSpectrumPlot, type PlotSeries } from '../plot/spectrum-plot.ts';
import type { StackReport } from './stack.ts';

export function renderStackPlot(report: StackReport): string {
  const name = report.design.name ?? report.design.file ?? 'stack';
  if (report.results.some((r) => r.sweep)) {
    const sweep = report.results[0].sweep!;
    return renderColourStrips({
      title: `${name}: reflected colour (D65, 2°) against the thickness of ${sweep.layer_role}`,
      xLabel: `thickness of layer ${sweep.layer} (nm)`,
      strips: report.results.map((r) => ({ label: `${r.angle_deg}°`, x: r.sweep!.rows.map((row) => row.thickness_nm), colours: r.sweep!.rows.map((row) => row.reflected.srgb_hex) })),
    });
  }
  const multi = report.results.length > 1;
  const tag = (label: string, angle: number) => (multi ? `${label} ${angle}°` : label);
  const percent = (v: number[]) => v.map((x) => 100 * x);
  const rta: PlotSeries[] = report.results.flatMap((r) => [
    { label: tag('R', r.angle_deg), x: r.wavelength_nm, y: percent(r.R), style: 'line' as const },
    { label: tag('T', r.angle_deg), x: r.wavelength_nm, y: percent(r.T), style: 'dashed' as const },
    ...(r.A.some((a) => a > 1e-9) ? [{ label: tag('A', r.angle_deg), x: r.wavelength_nm, y: percent(r.A), style: 'points' as const }] : []),
  ]);
  const pol = report.options.polarization === 'unpolarized' ? 'unpolarized' : `${report.options.polarization}-polarized`;
  return renderSpectrumPlot({
    title: `${name} (${pol})`,
    xLabel: 'wavelength (nm)',
    panels: [
      { yLabel: 'R, T, A (%)', series: rta },
      { yLabel: 'Ψ (°)', relativeHeight: 0.6, series: report.results.map((r) => ({ label: tag('Ψ', r.angle_deg), x: r.wavelength_nm, y: r.psi_deg, style: 'line' as const })) },
      { yLabel: 'Δ (°)', relativeHeight: 0.6, series: report.results.map((r) => ({ label: tag('Δ', r.angle_deg), x: r.wavelength_nm, y: r.delta_deg, style: 'line' as const })) },
    ],
  });
}
