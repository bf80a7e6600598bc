/**
 * Panel legends: size estimate, placement where it covers no data, and
 * rendering (one entry per series: swatch in the series' style + escaped label).
 */

import type { PlotSeriesStyle } from './spectrum-plot.ts';
import { SWATCH_WIDTH_PX, swatch } from './marks.ts';
import { element, estimateTextWidth, textElement } from './svg.ts';

export interface LegendEntry {
  label: string;
  style: PlotSeriesStyle;
  colour: string;
}

/** A rectangle in px. */
export interface Box {
  left: number;
  top: number;
  width: number;
  height: number;
}

const FONT_SIZE_PX = 12;
const ROW_HEIGHT_PX = 16;
const PADDING_PX = 6;
const SWATCH_GAP_PX = 6;
/** Distance between the legend and the panel frame. */
const INSET_PX = 6;
/** Spacing of the samples taken along a line segment when counting what a legend would hide. */
const SEGMENT_SAMPLE_PX = 2;

/** Legend width and height in px for the given entries. */
export function legendSize(entries: LegendEntry[]): { width: number; height: number } {
  const textWidth = Math.max(0, ...entries.map((e) => estimateTextWidth(e.label, FONT_SIZE_PX)));
  return {
    width: 2 * PADDING_PX + SWATCH_WIDTH_PX + SWATCH_GAP_PX + textWidth,
    height: 2 * PADDING_PX + entries.length * ROW_HEIGHT_PX,
  };
}

function inside(box: Box, [px, py]: [number, number]): boolean {
  return px >= box.left && px <= box.left + box.width && py >= box.top && py <= box.top + box.height;
}

/**
 * Clearance kept between a legend box and any data mark, in px: a point's radius (2.5 px) or half a line's
 * width, and a little air.
 */
export const LEGEND_CLEARANCE_PX = 3;

/** Room a legend takes from the top of a panel when it is given headroom there (box, inset above and below, clearance). */
export function legendBandHeight(size: { width: number; height: number }): number {
  return size.height + 2 * INSET_PX + LEGEND_CLEARANCE_PX;
}

/** Where a legend sits in a panel given headroom: top right, inside the band legendBandHeight reserves. */
export function headroomLegendBox(area: Box, size: { width: number; height: number }): Box {
  return { left: area.left + area.width - INSET_PX - size.width, top: area.top + INSET_PX, ...size };
}

/**
 * Chooses where a legend goes inside a panel without covering data: the first free position of top-right,
 * top-left, bottom-right, bottom-left, top-centre, bottom-centre, where free means no data mark within
 * LEGEND_CLEARANCE_PX of the box. Line segments are sampled every few px between vertices, so a sparse line
 * also counts. Takes the panel's plot area, the legend size and the pixel runs of its series; returns the
 * box, or null when every position covers data (the caller then gives the panel headroom for it).
 */
export function placeLegend(area: Box, size: { width: number; height: number }, runs: Array<Array<[number, number]>>): Box | null {
  const left = area.left + INSET_PX;
  const right = area.left + area.width - INSET_PX - size.width;
  const centre = area.left + (area.width - size.width) / 2;
  const top = area.top + INSET_PX;
  const bottom = area.top + area.height - INSET_PX - size.height;
  const candidates: Box[] = [
    { left: right, top, ...size },
    { left, top, ...size },
    { left: right, top: bottom, ...size },
    { left, top: bottom, ...size },
    { left: centre, top, ...size },
    { left: centre, top: bottom, ...size },
  ];
  const samples: Array<[number, number]> = [];
  for (const run of runs) {
    for (let i = 0; i < run.length; i++) {
      samples.push(run[i]);
      if (i === 0) continue;
      const [x0, y0] = run[i - 1];
      const [x1, y1] = run[i];
      const steps = Math.ceil(Math.hypot(x1 - x0, y1 - y0) / SEGMENT_SAMPLE_PX);
      for (let j = 1; j < steps; j++) samples.push([x0 + (j / steps) * (x1 - x0), y0 + (j / steps) * (y1 - y0)]);
    }
  }
  const c = LEGEND_CLEARANCE_PX;
  return (
    candidates.find(
      (box) => !samples.some((p) => inside({ left: box.left - c, top: box.top - c, width: box.width + 2 * c, height: box.height + 2 * c }, p)),
    ) ?? null
  );
}

/**
 * The legend of one panel. Takes the entries and the box from placeLegend; returns
 * <g class="legend"> with a translucent white background and one
 * <g class="legend-entry" data-label> (swatch + <text>) per entry.
 */
export function renderLegend(entries: LegendEntry[], box: Box): string {
  const rows = entries.map((entry, i) => {
    const y = box.top + PADDING_PX + (i + 0.5) * ROW_HEIGHT_PX;
    const swatchLeft = box.left + PADDING_PX;
    return element('g', { class: 'legend-entry', 'data-label': entry.label }, [
      swatch(entry.style, entry.colour, swatchLeft, y),
      textElement({ x: swatchLeft + SWATCH_WIDTH_PX + SWATCH_GAP_PX, y, dy: '0.35em', 'font-size': FONT_SIZE_PX }, entry.label),
    ]);
  });
  const background = element('rect', {
    x: box.left,
    y: box.top,
    width: box.width,
    height: box.height,
    fill: '#ffffff',
    'fill-opacity': 0.85,
    stroke: '#bbbbbb',
    'stroke-width': 0.75,
  });
  return element('g', { class: 'legend' }, [background, ...rows]);
}
