/** Plots of a stack report: R, T, A and Ψ, Δ against wavelength (renderSpectrumPlot), or the sweep's colour strips. */
import { renderColourStrips } from '../plot/colour-strip.ts';
import { srgbOf } from '../stack/colour.ts';
import { renderSpectrumPlot, type PlotSeries } from '../plot/spectrum-plot.ts';
import type { StackReport } from './stack.ts';

export function renderStackPlot(report: StackReport): string {
  const name = report.design.name ?? report.design.file ?? 'stack';
  if (report.results.some((r) => r.sweep)) {
    const sweep = report.results[0].sweep!;
    // A film reflecting 10 % looks dark on a screen but bright to an eye adapted to it: each strip is scaled
    // so its brightest colour has Y = 100 (chromaticity unchanged); the JSON keeps the absolute colours.
    const strips = report.results.map((r) => {
      const rows = r.sweep!.rows;
      const scale = 100 / Math.max(1e-9, ...rows.map((row) => row.reflected.Y));
      return {
        label: `${r.angle_deg}°`,
        x: rows.map((row) => row.thickness_nm),
        colours: rows.map((row) => srgbOf(row.reflected.X * scale, row.reflected.Y * scale, row.reflected.Z * scale).hex),
      };
    });
    return renderColourStrips({
      title: `${name}: reflected colour (D65, 2°)`,
      xLabel: `thickness of ${sweep.layer_role}, nm (each strip scaled so its brightest colour is Y = 100)`,
      strips,
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
      {
        yLabel: 'Ψ (°)',
        relativeHeight: 0.6,
        series: report.results.map((r) => ({ label: tag('Ψ', r.angle_deg), x: r.wavelength_nm, y: r.psi_deg, style: 'line' as const })),
      },
      {
        yLabel: 'Δ (°)',
        relativeHeight: 0.6,
        series: report.results.map((r) => ({ label: tag('Δ', r.angle_deg), x: r.wavelength_nm, y: r.delta_deg, style: 'line' as const })),
      },
    ],
  });
}
