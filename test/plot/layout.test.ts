/**
 * Plot layout, asserted on the documents themselves (not on taste): every plot the project makes and a few
 * hard cases are well formed, the title's estimated width (GLYPH_EM per character, measured for DejaVu Sans,
 * src/plot/svg.ts) fits the plot width and stays above the first panel, and no legend box overlaps any data
 * mark (circles with their radius, polyline vertices and the segments between them, with the line's width).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { renderSpectrumPlot, type PlotSpec } from '../../src/plot/spectrum-plot.ts';
import { estimateTextWidth } from '../../src/plot/svg.ts';
import { findAll, parseSvg, polylinePoints, type SvgNode } from './svg-tree.ts';
import { projectPlots, type ProjectPlot } from './project-plots.ts';

const TITLE_FONT_PX = 16;

interface Rect {
  x: number;
  y: number;
  w: number;
  h: number;
}
const num = (node: SvgNode, name: string) => Number(node.attrs[name]);
const rectOf = (node: SvgNode): Rect => ({ x: num(node, 'x'), y: num(node, 'y'), w: num(node, 'width'), h: num(node, 'height') });

/** Distance from a point to a rectangle (0 inside). */
function distanceToRect([px, py]: [number, number], r: Rect): number {
  const dx = Math.max(r.x - px, 0, px - (r.x + r.w));
  const dy = Math.max(r.y - py, 0, py - (r.y + r.h));
  return Math.hypot(dx, dy);
}

/** True when the segment a–b passes through the rectangle (Liang–Barsky clipping). */
function segmentHitsRect([x0, y0]: [number, number], [x1, y1]: [number, number], r: Rect): boolean {
  const dx = x1 - x0;
  const dy = y1 - y0;
  let t0 = 0;
  let t1 = 1;
  for (const [p, q] of [
    [-dx, x0 - r.x],
    [dx, r.x + r.w - x0],
    [-dy, y0 - r.y],
    [dy, r.y + r.h - y0],
  ]) {
    if (p === 0) {
      if (q < 0) return false;
    } else {
      const t = q / p;
      if (p < 0) t0 = Math.max(t0, t);
      else t1 = Math.min(t1, t);
      if (t0 > t1) return false;
    }
  }
  return true;
}

const inflate = (r: Rect, by: number): Rect => ({ x: r.x - by, y: r.y - by, w: r.w + 2 * by, h: r.h + 2 * by });

/** The data marks a panel's legend covers, described for the failure message (empty when none). */
function coveredMarks(panel: SvgNode): string[] {
  const legend = findAll(panel, 'g', 'legend')[0];
  if (!legend) return [];
  const box = rectOf(findAll(legend, 'rect')[0]);
  const covered: string[] = [];
  for (const series of findAll(panel, 'g', 'series')) {
    const label = series.attrs['data-label'];
    for (const c of findAll(series, 'circle')) {
      if (distanceToRect([num(c, 'cx'), num(c, 'cy')], box) < num(c, 'r')) covered.push(`${label}: point at ${c.attrs.cx},${c.attrs.cy}`);
    }
    const halfWidth = Number(series.attrs['stroke-width'] ?? 0) / 2;
    for (const line of findAll(series, 'polyline')) {
      const pts = polylinePoints(line);
      for (let i = 1; i < pts.length; i++) {
        if (segmentHitsRect(pts[i - 1], pts[i], inflate(box, halfWidth))) covered.push(`${label}: segment ${pts[i - 1]} – ${pts[i]}`);
      }
    }
  }
  return covered;
}

/** Checks every layout rule on one rendered plot. */
function expectReadableLayout(svg: string, spec: PlotSpec): void {
  const root = parseSvg(svg); // throws on a malformed document
  const width = Number(root.attrs.width);
  expect(findAll(root, 'title')[0].text).toBe(spec.title);
  const title = findAll(root, 'text', 'title')[0];
  const spans = findAll(title, 'tspan', 'title-line');
  const lines = spans.length > 0 ? spans.map((s) => s.text) : [title.text];
  expect(lines.length).toBeLessThanOrEqual(2);
  for (const line of lines) {
    expect(estimateTextWidth(line, TITLE_FONT_PX, 'bold'), `title line "${line}"`).toBeLessThanOrEqual(width - 20);
  }
  // nothing of the title is lost unless it had to be shortened (then an ellipsis says so)
  const shown = lines.join(' ');
  if (!shown.includes('…')) expect(shown).toBe(spec.title.split(' ').filter(Boolean).join(' '));
  const panels = findAll(root, 'g', 'panel');
  const lastBaseline = Number(title.attrs.y) + spans.slice(1).reduce((s, t) => s + Number(t.attrs.dy), 0);
  expect(lastBaseline + 5, 'title above the first panel').toBeLessThanOrEqual(num(findAll(panels[0], 'rect', 'frame')[0], 'y'));
  for (const panel of panels) {
    expect(coveredMarks(panel), `legend of panel "${panel.attrs['data-y-label']}" covers data`).toEqual([]);
  }
}

describe('every plot the project makes (fit, KK and diff plots of the demo data)', () => {
  let plots: ProjectPlot[];
  beforeAll(async () => {
    plots = await projectPlots();
  }, 60_000);

  it('covers the fit, KK and diff plots of the demo data', () => {
    expect(plots.map((p) => p.name.split('-')[0]).sort()).toEqual([...Array(7).fill('fit'), 'diff', ...Array(7).fill('kk')].sort());
  });

  it('titles fit the width, legends cover no data', () => {
    for (const plot of plots) expectReadableLayout(plot.svg, plot.spec);
  });

  it('the KK plot draws its tolerance band as one dashed series with one legend entry', () => {
    for (const plot of plots.filter((p) => p.name.startsWith('kk-'))) {
      const residualPanel = findAll(parseSvg(plot.svg), 'g', 'panel')[1];
      const band = findAll(residualPanel, 'g', 'series').filter((s) => /tolerance/.test(s.attrs['data-label']));
      expect(band, plot.name).toHaveLength(1);
      expect(band[0].attrs['data-style']).toBe('dashed');
      expect(findAll(band[0], 'polyline')).toHaveLength(2); // upper and lower edge, one style
      expect(findAll(residualPanel, 'g', 'legend-entry').map((e) => e.attrs['data-label'])).toEqual(['Δn', '±tolerance 0.005']);
    }
  });

  it('the KK title of a long file name wraps onto two lines instead of running off both ends', () => {
    const ito = plots.find((p) => p.name === 'kk-ito-sputtered')!;
    const title = findAll(parseSvg(ito.svg), 'text', 'title')[0];
    const lines = findAll(title, 'tspan', 'title-line').map((t) => t.text);
    expect(lines).toHaveLength(2);
    expect(lines[0]).toMatch(/^Kramers-Kronig check of data\/marrowick\/ito-sputtered\.tsv:/);
  });
});

describe('hard cases', () => {
  /** Seeded uniform scatter (mulberry32, common practice) filling the whole panel: no corner is free. */
  function scatter(seed: number, count: number): { x: number[]; y: number[] } {
    let a = seed;
    const u = () => {
      a = (a + 0x6d2b79f5) | 0;
      let t = Math.imul(a ^ (a >>> 15), 1 | a);
      t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
      return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
    };
    const x = Array.from({ length: count }, (_, i) => 300 + (900 * i) / (count - 1));
    return { x, y: x.map(() => u()) };
  }

  it('data filling every corner: the panel gets headroom and the legend still covers nothing', () => {
    const a = scatter(1, 400);
    const b = scatter(2, 400);
    const spec: PlotSpec = {
      title: 'scatter',
      xLabel: 'Wavelength (nm)',
      panels: [
        {
          yLabel: 'y',
          series: [
            { label: 'points', ...a, style: 'points' },
            { label: 'line', ...b, style: 'line' },
          ],
        },
        { yLabel: 'r', relativeHeight: 0.5, zeroLine: true, series: [{ label: 'residual', x: a.x, y: a.y.map((v) => v - 0.5), style: 'points' }] },
      ],
    };
    const svg = renderSpectrumPlot(spec);
    expectReadableLayout(svg, spec);
    // the data keep their nice ticks below the legend's band
    const ticks = findAll(findAll(parseSvg(svg), 'g', 'panel')[0], 'g', 'y-tick').map((t) => Number(t.attrs['data-value']));
    expect(ticks[0]).toBeLessThanOrEqual(0);
    expect(ticks[ticks.length - 1]).toBeGreaterThanOrEqual(Math.max(...a.y, ...b.y));
  });

  it('a long title wraps at spaces; a word longer than the width is shortened in its middle', () => {
    const words = 'Kramers-Kronig check of data/marrowick/ito-sputtered.tsv: consistent (max |Δn| 3.5e-3 at 1525.0 nm)';
    const longPath = `/mnt/lab-share/marrowick/ellipsometry/2026/${'very-long-folder-name/'.repeat(8)}ito.tsv`;
    for (const [title, width] of [
      [words, 800],
      [words, 420],
      [`tauc-lorentz fit of ${longPath}`, 800],
      [`${words} ${words} ${words}`, 640],
    ] as const) {
      const spec: PlotSpec = {
        title,
        xLabel: 'x',
        width,
        panels: [{ yLabel: 'y', series: [{ label: 's', x: [1, 2, 3], y: [1, 3, 2], style: 'line' }] }],
      };
      expectReadableLayout(renderSpectrumPlot(spec), spec);
    }
    const shortened = findAll(parseSvg(renderSpectrumPlot({ title: `fit of ${longPath}`, xLabel: 'x', panels: [] })), 'tspan', 'title-line').map(
      (t) => t.text,
    );
    expect(shortened[1]).toMatch(/^\/mnt\/lab-share.*….*folder-name\/ito\.tsv$/);
  });
});
