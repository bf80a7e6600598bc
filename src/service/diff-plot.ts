/** The plot of a version diff: n of both, k of both, and Δn, Δk, over the common range. */
import { renderSpectrumPlot, type PlotSpec } from '../plot/spectrum-plot.ts';
import { InputError } from '../errors.ts';
import type { VersionDiff } from './diff.ts';

export function diffPlotSpec(diff: VersionDiff): PlotSpec {
  if (!diff.curves) throw new InputError('diff-no-overlap', `${diff.a.ref} and ${diff.b.ref} cover no common wavelength range: nothing to plot`);
  const { wavelength_nm: x, n_a, n_b, k_a, k_b } = diff.curves;
  return {
    title: `${diff.a.ref} vs ${diff.b.ref}`,
    xLabel: 'Wavelength (nm)',
    panels: [
      {
        yLabel: 'n',
        series: [
          { label: diff.a.ref, x, y: n_a, style: 'line' },
          { label: diff.b.ref, x, y: n_b, style: 'dashed' },
        ],
      },
      {
        yLabel: 'k',
        series: [
          { label: diff.a.ref, x, y: k_a, style: 'line' },
          { label: diff.b.ref, x, y: k_b, style: 'dashed' },
        ],
      },
      {
        yLabel: 'difference (b − a)',
        relativeHeight: 0.6,
        zeroLine: true,
        series: [
          { label: 'Δn', x, y: n_b.map((v, i) => v - n_a[i]), style: 'line' },
          { label: 'Δk', x, y: k_b.map((v, i) => v - k_a[i]), style: 'dashed' },
        ],
      },
    ],
  };
}

export function renderDiffPlot(diff: VersionDiff): string {
  return renderSpectrumPlot(diffPlotSpec(diff));
}
