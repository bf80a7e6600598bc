/**
 * Series marks: the colour palette, the drawing of one series (points, line, dashed line) and the
 * legend swatch in the same style. Pure functions returning SVG text.
 */

import type { LinearScale } from './scale.ts';
import type { PlotSeries, PlotSeriesStyle } from './spectrum-plot.ts';
import { element, pointsAttribute } from './svg.ts';

/**
 * Okabe–Ito colour-blind-safe palette (M. Okabe and K. Ito, "Color Universal Design (CUD): how to
 * make figures and presentations that are friendly to colorblind people", J*Fly, 2002/2008;
 * common practice in scientific figures). Ordered for a white background: blue, vermillion,
 * bluish green, reddish purple, orange, sky blue, black, yellow (last: weak contrast on white).
 */
export const OKABE_ITO_PALETTE: readonly string[] = ['#0072B2', '#D55E00', '#009E73', '#CC79A7', '#E69F00', '#56B4E9', '#000000', '#F0E442'];

/** Colour of the i-th series of a panel (the palette repeats after eight series). */
export function seriesColour(index: number): string {
  return OKABE_ITO_PALETTE[index % OKABE_ITO_PALETTE.length];
}

const POINT_RADIUS_PX = 2.5;
/** Radius of an isolated vertex of a line series (a finite value between two gaps), so it is not lost. */
const ISOLATED_RADIUS_PX = 1.75;
const LINE_WIDTH_PX = 1.5;
const DASH_ARRAY = '6 4';

/** Stroke attributes of a line-style series. */
function strokeAttributes(style: PlotSeriesStyle, colour: string) {
  return {
    fill: 'none',
    stroke: colour,
    'stroke-width': LINE_WIDTH_PX,
    'stroke-linejoin': 'round',
    'stroke-dasharray': style === 'dashed' ? DASH_ARRAY : undefined,
  };
}

/**
 * Splits a series into runs of consecutive points whose x and y are both finite; a NaN (or ±∞)
 * ends a run, so a line shows a gap there. Takes the series and the two scales; returns pixel runs.
 */
export function pixelRuns(series: PlotSeries, x: LinearScale, y: LinearScale): Array<Array<[number, number]>> {
  const runs: Array<Array<[number, number]>> = [];
  let run: Array<[number, number]> = [];
  for (let i = 0; i < series.x.length; i++) {
    const xv = series.x[i];
    const yv = series.y[i];
    if (Number.isFinite(xv) && Number.isFinite(yv)) {
      run.push([x(xv), y(yv)]);
    } else if (run.length > 0) {
      runs.push(run);
      run = [];
    }
  }
  if (run.length > 0) runs.push(run);
  return runs;
}

/**
 * The marks of one series. Takes the series, its colour and the panel's scales; returns
 * <g class="series" data-label data-style data-count> holding one <circle> per finite point
 * ('points') or one <polyline> per unbroken run ('line', 'dashed'; a run of one vertex becomes a
 * small <circle class="isolated">), plus the pixel runs (for legend placement).
 */
export function drawSeries(
  series: PlotSeries,
  colour: string,
  x: LinearScale,
  y: LinearScale,
): { svg: string; runs: Array<Array<[number, number]>> } {
  const runs = pixelRuns(series, x, y);
  const count = runs.reduce((sum, run) => sum + run.length, 0);
  const marks: string[] = [];
  if (series.style === 'points') {
    for (const run of runs) {
      for (const [cx, cy] of run) marks.push(element('circle', { cx, cy, r: POINT_RADIUS_PX }));
    }
  } else {
    for (const run of runs) {
      if (run.length === 1) {
        const [cx, cy] = run[0];
        marks.push(element('circle', { class: 'isolated', cx, cy, r: ISOLATED_RADIUS_PX, fill: colour, stroke: 'none' }));
      } else {
        marks.push(element('polyline', { points: pointsAttribute(run) }));
      }
    }
  }
  const groupStyle = series.style === 'points' ? { fill: colour } : strokeAttributes(series.style, colour);
  const svg = element(
    'g',
    { class: 'series', 'data-label': series.label, 'data-style': series.style, 'data-count': String(count), ...groupStyle },
    marks,
  );
  return { svg, runs };
}

/** Width of a legend swatch in px. */
export const SWATCH_WIDTH_PX = 22;

/**
 * A legend swatch in the series' style, centred vertically on y. Takes the style, colour and the
 * swatch's left x and centre y; returns a circle ('points') or a short (dashed) line.
 */
export function swatch(style: PlotSeriesStyle, colour: string, left: number, y: number): string {
  if (style === 'points') {
    return element('circle', { class: 'swatch', cx: left + SWATCH_WIDTH_PX / 2, cy: y, r: POINT_RADIUS_PX + 0.5, fill: colour });
  }
  return element('line', { class: 'swatch', x1: left, y1: y, x2: left + SWATCH_WIDTH_PX, y2: y, ...strokeAttributes(style, colour) });
}
