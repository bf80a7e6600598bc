/**
 * Spectrum plots as standalone SVG 1.1 documents: stacked panels sharing one x axis (e.g. n, k
 * and fit residuals against wavelength), each panel with its own y axis and legend.
 * Built as text, no browser, no I/O. Used by `fit --plot`, `kk --plot`, `diff --plot` and web pages.
 *
 * Document structure (class names are stable, for tests and web pages):
 *   <svg> <title/> <text class="title"> (a <tspan class="title-line"> per line when the title wraps)
 *     <g class="panel" data-index data-y-label> frame, <g class="grid">, <g class="y-axis"> with
 *       <g class="y-tick" data-value> and <text class="axis-label">, optional <line class="zero-line">,
 *       one <g class="series" data-label data-style data-count> per series, <g class="legend">,
 *       or <text class="no-data"> when the panel has nothing finite to show </g>
 *     <g class="x-axis"> with <g class="x-tick" data-value> and <text class="axis-label"> </g>
 */

import { drawSeries, pixelRuns, seriesColour } from './marks.ts';
import { headroomLegendBox, legendBandHeight, legendSize, placeLegend, renderLegend, type Box, type LegendEntry } from './legend.ts';
import { linearScale, niceDomain, paddedExtent, tickFormat, type LinearScale } from './scale.ts';
import { element, escapeXml, estimateTextWidth, svgDocument, textElement, wrapText } from './svg.ts';

export type PlotSeriesStyle = 'points' | 'line' | 'dashed';

/** One data series: x and y of equal length; NaN / ±∞ entries are skipped (a gap in a line). */
export interface PlotSeries {
  label: string;
  x: number[];
  y: number[];
  style: PlotSeriesStyle;
}

/** One panel of the stack. relativeHeight (default 1) is its share of the height; zeroLine draws a dashed y = 0. */
export interface PlotPanel {
  yLabel: string;
  series: PlotSeries[];
  relativeHeight?: number;
  zeroLine?: boolean;
}

/** A whole plot. xLabel carries its unit ("Wavelength (nm)"); width and height in px. */
export interface PlotSpec {
  title: string;
  xLabel: string;
  panels: PlotPanel[];
  width?: number;
  height?: number;
}

const DEFAULT_WIDTH_PX = 800;
const TITLE_FONT_PX = 16;
const AXIS_LABEL_FONT_PX = 13;
const TICK_FONT_PX = 12;
const TICK_LENGTH_PX = 5;
const MARGIN_TOP_PX = 44;
/** The title: baseline of its first line, line spacing, side margins it keeps inside the plot width, most lines. */
const TITLE_BASELINE_PX = 26;
const TITLE_LINE_HEIGHT_PX = 20;
const TITLE_SIDE_MARGIN_PX = 10;
const TITLE_MAX_LINES = 2;
const MARGIN_BOTTOM_PX = 52;
const MARGIN_RIGHT_PX = 20;
const PANEL_GAP_PX = 18;
const MIN_PANEL_HEIGHT_PX = 10;
/** Target spacing between ticks, which sets the tick count for the available length. */
const X_TICK_SPACING_PX = 90;
const Y_TICK_SPACING_PX = 45;
/** Room kept between the y data and the frame (in px, a marker radius and a bit) before rounding the axis to nice ticks. */
const Y_PADDING_PX = 4;

/** Default height: enough for legible panels (400 px for one panel, 240 px more per extra panel). */
function defaultHeight(panelCount: number): number {
  return Math.max(400, 120 + 240 * panelCount);
}

function checkSpec(spec: PlotSpec): void {
  for (const [name, value] of [
    ['width', spec.width],
    ['height', spec.height],
  ] as const) {
    if (value !== undefined && !(Number.isFinite(value) && value > 0)) {
      throw new RangeError(`PlotSpec.${name} must be a positive number of px, got ${value}`);
    }
  }
  for (const panel of spec.panels) {
    const weight = panel.relativeHeight;
    if (weight !== undefined && !(Number.isFinite(weight) && weight > 0)) {
      throw new RangeError(`relativeHeight of panel "${panel.yLabel}" must be a positive number, got ${weight}`);
    }
    for (const series of panel.series) {
      if (series.x.length !== series.y.length) {
        throw new RangeError(`series "${series.label}" has ${series.x.length} x values but ${series.y.length} y values`);
      }
    }
  }
}

/** The x and y arrays of a series restricted to entries where both are finite. */
function finitePairs(series: PlotSeries): { x: number[]; y: number[] } {
  const x: number[] = [];
  const y: number[] = [];
  for (let i = 0; i < series.x.length; i++) {
    if (Number.isFinite(series.x[i]) && Number.isFinite(series.y[i])) {
      x.push(series.x[i]);
      y.push(series.y[i]);
    }
  }
  return { x, y };
}

/** A nice axis for data values: domain rounded out to ticks, the ticks and their labels; null without data. */
interface Axis {
  domain: [number, number];
  ticks: number[];
  format: (value: number) => string;
}

function niceAxis(extent: [number, number] | null, lengthPx: number, spacingPx: number): Axis | null {
  if (extent === null) return null;
  const count = Math.max(3, Math.round(lengthPx / spacingPx));
  const { domain, ticks } = niceDomain(extent[0], extent[1], count);
  return { domain, ticks, format: tickFormat(ticks) };
}

interface PanelLayout {
  panel: PlotPanel;
  top: number;
  height: number;
  yAxis: Axis | null;
  legend: LegendEntry[];
  legendSize: { width: number; height: number };
  /** True when the y axis was stretched upward so the legend has a band above all data. */
  headroom: boolean;
}

/**
 * Splits the vertical space among panels by relativeHeight and builds each panel's y axis. A panel in
 * `headroom` gets its axis stretched above the data by the legend's band: with the nice domain [lo, hi]
 * covering the data, hi' = hi + (hi − lo)·B/(H − B) leaves the top B px of the H px panel free of data.
 */
function layoutPanels(panels: PlotPanel[], heightPx: number, topPx: number, headroom: Set<number>): PanelLayout[] {
  const available = heightPx - topPx - MARGIN_BOTTOM_PX - PANEL_GAP_PX * (panels.length - 1);
  const weights = panels.map((p) => p.relativeHeight ?? 1);
  const totalWeight = weights.reduce((a, b) => a + b, 0);
  let top = topPx;
  return panels.map((panel, i) => {
    const height = Math.max(MIN_PANEL_HEIGHT_PX, (available * weights[i]) / totalWeight);
    const ys = panel.series.map((s) => finitePairs(s).y);
    const padFraction = Y_PADDING_PX / height;
    let extent = paddedExtent(ys, padFraction);
    if (extent !== null && panel.zeroLine) extent = paddedExtent([ys.flat(), [0]], padFraction);
    const legend = panel.series.map((s, j) => ({ label: s.label, style: s.style, colour: seriesColour(j) }));
    const size = legendSize(legend);
    const yAxis = niceAxis(extent, height, Y_TICK_SPACING_PX);
    const stretched = headroom.has(i) && yAxis !== null;
    if (stretched) {
      const band = Math.min(legendBandHeight(size), height / 2);
      const [lo, hi] = yAxis.domain;
      yAxis.domain = [lo, hi + ((hi - lo) * band) / (height - band)];
    }
    const layout = { panel, top, height, yAxis, legend, legendSize: size, headroom: stretched };
    top += height + PANEL_GAP_PX;
    return layout;
  });
}

/** Font size for a rotated y label so it fits the panel height (never below 9 px). */
function yLabelFontSize(label: string, panelHeightPx: number): number {
  const natural = estimateTextWidth(label, AXIS_LABEL_FONT_PX);
  if (natural <= panelHeightPx * 0.95) return AXIS_LABEL_FONT_PX;
  return Math.max(9, (AXIS_LABEL_FONT_PX * panelHeightPx * 0.95) / natural);
}

const GRID_STYLE = { stroke: '#e6e6e6', 'stroke-width': 1 };
const AXIS_STYLE = { stroke: '#444444', 'stroke-width': 1 };

/** The y scale of a panel (null when it has no data). */
function yScaleOf(layout: PanelLayout, area: Box): LinearScale | null {
  return layout.yAxis ? linearScale(layout.yAxis.domain, [area.top + area.height, area.top]) : null;
}

/** Where the panel's legend goes: a free position, the headroom band, or null (no free position yet). */
function legendBoxOf(layout: PanelLayout, area: Box, x: LinearScale): Box | null {
  const y = yScaleOf(layout, area);
  if (!y) return null;
  if (layout.headroom) return headroomLegendBox(area, layout.legendSize);
  return placeLegend(
    area,
    layout.legendSize,
    layout.panel.series.flatMap((s) => pixelRuns(s, x, y)),
  );
}

function renderPanel(layout: PanelLayout, index: number, area: Box, x: LinearScale, xAxis: Axis | null, legendBox: Box | null): string {
  const { panel, yAxis } = layout;
  const right = area.left + area.width;
  const bottom = area.top + area.height;
  const parts: string[] = [];
  const y = yScaleOf(layout, area);

  const grid: string[] = [];
  for (const value of xAxis?.ticks ?? []) {
    grid.push(element('line', { x1: x(value), y1: area.top, x2: x(value), y2: bottom }));
  }
  for (const value of (y && yAxis?.ticks) || []) {
    grid.push(element('line', { x1: area.left, y1: y!(value), x2: right, y2: y!(value) }));
  }
  parts.push(element('g', { class: 'grid', ...GRID_STYLE }, grid));

  const yTicks = (yAxis?.ticks ?? []).map((value) =>
    element('g', { class: 'y-tick', 'data-value': String(value) }, [
      element('line', { x1: area.left - TICK_LENGTH_PX, y1: y!(value), x2: area.left, y2: y!(value), ...AXIS_STYLE }),
      textElement({ x: area.left - TICK_LENGTH_PX - 3, y: y!(value), dy: '0.32em', 'text-anchor': 'end' }, yAxis!.format(value)),
    ]),
  );
  const labelX = 16;
  const labelY = area.top + area.height / 2;
  const yLabel = textElement(
    {
      class: 'axis-label',
      x: labelX,
      y: labelY,
      transform: `rotate(-90 ${labelX} ${labelY.toFixed(2)})`,
      'text-anchor': 'middle',
      'font-size': yLabelFontSize(panel.yLabel, area.height),
    },
    panel.yLabel,
  );
  parts.push(element('g', { class: 'y-axis' }, [...yTicks, yLabel]));

  if (y && panel.zeroLine) {
    parts.push(
      element('line', {
        class: 'zero-line',
        x1: area.left,
        y1: y(0),
        x2: right,
        y2: y(0),
        stroke: '#555555',
        'stroke-width': 1,
        'stroke-dasharray': '4 3',
      }),
    );
  }

  if (y) {
    panel.series.forEach((s, i) => parts.push(drawSeries(s, layout.legend[i].colour, x, y).svg));
    if (legendBox) parts.push(renderLegend(layout.legend, legendBox));
  } else {
    parts.push(
      textElement(
        {
          class: 'no-data',
          x: area.left + area.width / 2,
          y: labelY,
          dy: '0.35em',
          'text-anchor': 'middle',
          fill: '#777777',
          'font-size': AXIS_LABEL_FONT_PX,
        },
        'no data',
      ),
    );
  }

  parts.push(element('rect', { class: 'frame', x: area.left, y: area.top, width: area.width, height: area.height, fill: 'none', ...AXIS_STYLE }));
  return element('g', { class: 'panel', 'data-index': String(index), 'data-y-label': panel.yLabel }, parts);
}

function renderXAxis(xAxis: Axis | null, x: LinearScale, plotBottom: number, xLabel: string, height: number): string {
  const ticks = (xAxis?.ticks ?? []).map((value) =>
    element('g', { class: 'x-tick', 'data-value': String(value) }, [
      element('line', { x1: x(value), y1: plotBottom, x2: x(value), y2: plotBottom + TICK_LENGTH_PX, ...AXIS_STYLE }),
      textElement({ x: x(value), y: plotBottom + TICK_LENGTH_PX + TICK_FONT_PX + 2, 'text-anchor': 'middle' }, xAxis!.format(value)),
    ]),
  );
  const label = textElement(
    { class: 'axis-label', x: (x.range[0] + x.range[1]) / 2, y: height - 10, 'text-anchor': 'middle', 'font-size': AXIS_LABEL_FONT_PX },
    xLabel,
  );
  return element('g', { class: 'x-axis' }, [...ticks, label]);
}

/**
 * The title as <text class="title">: one line as plain text, several as one <tspan class="title-line"> each.
 * Its full text is also in <title>.
 */
function renderTitle(lines: string[], width: number): string {
  const attributes = {
    class: 'title',
    x: width / 2,
    y: TITLE_BASELINE_PX,
    'text-anchor': 'middle',
    'font-size': TITLE_FONT_PX,
    'font-weight': 'bold',
  };
  if (lines.length === 1) return textElement(attributes, lines[0]);
  const spans = lines.map((line, i) =>
    element('tspan', { class: 'title-line', x: width / 2, dy: i === 0 ? 0 : TITLE_LINE_HEIGHT_PX }, [escapeXml(line)]),
  );
  return element('text', attributes, spans);
}

/**
 * Renders a spectrum plot.
 * Takes a PlotSpec: title, x-axis label (with its unit), panels stacked top to bottom sharing
 * the x axis, optional width/height in px (default 800 × max(400, 120 + 240 × panels)).
 * Returns a complete standalone SVG 1.1 document (XML declaration, xmlns, width, height, viewBox).
 * Axes get "nice" 1-2-5 ticks covering all finite data; NaN values are skipped (lines break);
 * a panel without finite data says "no data"; every point is drawn (no decimation), with
 * coordinates rounded to 0.01 px. All text is XML-escaped.
 * Throws RangeError for caller bugs: x/y length mismatch, non-positive size or relativeHeight.
 */
export function renderSpectrumPlot(spec: PlotSpec): string {
  checkSpec(spec);
  const panels: PlotPanel[] = spec.panels.length > 0 ? spec.panels : [{ yLabel: '', series: [] }];
  const width = spec.width ?? DEFAULT_WIDTH_PX;
  const height = spec.height ?? defaultHeight(panels.length);

  const titleLines = wrapText(spec.title, width - 2 * TITLE_SIDE_MARGIN_PX, TITLE_FONT_PX, TITLE_MAX_LINES, 'bold');
  const top = MARGIN_TOP_PX + (titleLines.length - 1) * TITLE_LINE_HEIGHT_PX;

  // Legends never cover data: a panel whose legend finds no free position gets headroom and the layout is
  // redone (the left margin, hence the x scale, may move with the new y ticks). A panel with headroom always
  // has its place, so this ends after at most one pass per panel.
  const headroom = new Set<number>();
  let frame: { layouts: PanelLayout[]; areas: Box[]; boxes: (Box | null)[]; x: LinearScale; xAxis: Axis | null };
  for (;;) {
    const layouts = layoutPanels(panels, height, top, headroom);
    const tickLabelWidth = Math.max(
      0,
      ...layouts.flatMap((l) => (l.yAxis ? l.yAxis.ticks.map((t) => estimateTextWidth(l.yAxis!.format(t), TICK_FONT_PX)) : [])),
    );
    const left = 6 + AXIS_LABEL_FONT_PX + 10 + tickLabelWidth + TICK_LENGTH_PX + 3;
    const plotWidth = Math.max(MIN_PANEL_HEIGHT_PX, width - left - MARGIN_RIGHT_PX);
    const xExtent = paddedExtent(
      panels.flatMap((p) => p.series.map((s) => finitePairs(s).x)),
      0,
    );
    const xAxis = niceAxis(xExtent, plotWidth, X_TICK_SPACING_PX);
    const x = linearScale(xAxis ? xAxis.domain : [0, 1], [left, left + plotWidth]);
    const areas = layouts.map((l) => ({ left, top: l.top, width: plotWidth, height: l.height }));
    const boxes = layouts.map((l, i) => legendBoxOf(l, areas[i], x));
    frame = { layouts, areas, boxes, x, xAxis };
    const crowded = layouts.flatMap((l, i) => (l.yAxis && boxes[i] === null ? [i] : []));
    if (crowded.length === 0) break;
    for (const i of crowded) headroom.add(i);
  }
  const { layouts, areas, boxes, x, xAxis } = frame;
  const panelSvg = layouts.map((layout, i) => renderPanel(layout, i, areas[i], x, xAxis, boxes[i]));
  const last = layouts[layouts.length - 1];
  const plotBottom = last.top + last.height;

  const body = [
    `<title>${escapeXml(spec.title)}</title>`,
    element('rect', { class: 'background', x: 0, y: 0, width, height, fill: '#ffffff' }),
    renderTitle(titleLines, width),
    ...panelSvg,
    renderXAxis(xAxis, x, plotBottom, spec.xLabel, height),
  ];
  return svgDocument(width, height, TICK_FONT_PX, body);
}
