/**
 * Colour strips as a standalone SVG 1.1 document: one strip per row (e.g. per angle of incidence) of
 * colour swatches along a numeric axis (e.g. a layer's thickness in nm) — the interference-colour chart of
 * an oxide on silicon or of a free-standing film. Built as text, no I/O.
 *
 * Structure (class names are stable, for tests and web pages): <svg> <title/> <text class="title"/>
 *   <g class="strip" data-label> <text class="strip-label"/> one <rect class="swatch" data-x data-colour> per
 *   value </g> … <g class="x-axis"> <g class="x-tick" data-value> … <text class="axis-label"/> </g>
 */
import { linearScale, niceTicks, tickFormat } from './scale.ts';
import { element, escapeXml, estimateTextWidth, svgDocument, textElement } from './svg.ts';

export interface ColourStrip {
  label: string;
  /** Axis values in ascending order, equally spaced or not; each swatch spans halfway to its neighbours. */
  x: number[];
  /** One CSS colour (#rrggbb) per value. */
  colours: string[];
}

export interface ColourStripSpec {
  title: string;
  xLabel: string;
  strips: ColourStrip[];
  width?: number;
}

const WIDTH_PX = 800;
const STRIP_HEIGHT_PX = 56;
const STRIP_GAP_PX = 12;
const TOP_PX = 44;
const AXIS_PX = 52;
const RIGHT_PX = 20;
const FONT_PX = 12;
const HEX = /^#[0-9a-fA-F]{6}$/;

/** Renders the strips; throws RangeError for caller bugs (length mismatch, a colour that is not #rrggbb). */
export function renderColourStrips(spec: ColourStripSpec): string {
  const width = spec.width ?? WIDTH_PX;
  for (const s of spec.strips) {
    if (s.x.length !== s.colours.length) throw new RangeError(`strip "${s.label}" has ${s.x.length} values but ${s.colours.length} colours`);
    if (!s.colours.every((c) => HEX.test(c))) throw new RangeError(`strip "${s.label}" has a colour that is not #rrggbb`);
  }
  const left = 16 + Math.max(40, ...spec.strips.map((s) => estimateTextWidth(s.label, FONT_PX)));
  const all = spec.strips.flatMap((s) => s.x).filter(Number.isFinite);
  const lo = all.length ? Math.min(...all) : 0;
  const hi = all.length ? Math.max(...all) : 1;
  const domain: [number, number] = lo === hi ? [lo - 0.5, hi + 0.5] : [lo, hi];
  const x = linearScale(domain, [left, width - RIGHT_PX]);
  const height = TOP_PX + spec.strips.length * (STRIP_HEIGHT_PX + STRIP_GAP_PX) + AXIS_PX;

  const strips = spec.strips.map((s, row) => {
    const top = TOP_PX + row * (STRIP_HEIGHT_PX + STRIP_GAP_PX);
    const swatches = s.x.map((v, i) => {
      const from = i === 0 ? v - (s.x.length > 1 ? (s.x[1] - v) / 2 : 0.5) : (s.x[i - 1] + v) / 2;
      const to = i === s.x.length - 1 ? v + (s.x.length > 1 ? (v - s.x[i - 1]) / 2 : 0.5) : (v + s.x[i + 1]) / 2;
      const x0 = Math.max(left, x(from));
      const x1 = Math.min(width - RIGHT_PX, x(to));
      // A hair of overlap so anti-aliasing shows no seams between swatches.
      return element('rect', {
        class: 'swatch',
        'data-x': String(v),
        'data-colour': s.colours[i],
        x: x0,
        y: top,
        width: Math.max(0.5, x1 - x0 + 0.4),
        height: STRIP_HEIGHT_PX,
        fill: s.colours[i],
      });
    });
    const label = textElement({ class: 'strip-label', x: left - 6, y: top + STRIP_HEIGHT_PX / 2, dy: '0.32em', 'text-anchor': 'end' }, s.label);
    return element('g', { class: 'strip', 'data-label': s.label }, [
      label,
      ...swatches,
      element('rect', {
        x: left,
        y: top,
        width: width - RIGHT_PX - left,
        height: STRIP_HEIGHT_PX,
        fill: 'none',
        stroke: '#444444',
        'stroke-width': 1,
      }),
    ]);
  });

  const axisTop = TOP_PX + spec.strips.length * (STRIP_HEIGHT_PX + STRIP_GAP_PX) - STRIP_GAP_PX;
  const ticks = niceTicks(domain[0], domain[1], Math.max(3, Math.round((width - left - RIGHT_PX) / 90)));
  const format = tickFormat(ticks);
  const axis = element('g', { class: 'x-axis' }, [
    ...ticks.map((t) =>
      element('g', { class: 'x-tick', 'data-value': String(t) }, [
        element('line', { x1: x(t), y1: axisTop, x2: x(t), y2: axisTop + 5, stroke: '#444444', 'stroke-width': 1 }),
        textElement({ x: x(t), y: axisTop + 5 + FONT_PX + 2, 'text-anchor': 'middle' }, format(t)),
      ]),
    ),
    textElement({ class: 'axis-label', x: (left + width - RIGHT_PX) / 2, y: height - 10, 'text-anchor': 'middle', 'font-size': 13 }, spec.xLabel),
  ]);
  const body = [
    `<title>${escapeXml(spec.title)}</title>`,
    element('rect', { class: 'background', x: 0, y: 0, width, height, fill: '#ffffff' }),
    // A long title shrinks to fit the width (estimated glyph widths; never below 10 px).
    textElement(
      {
        class: 'title',
        x: width / 2,
        y: 26,
        'text-anchor': 'middle',
        'font-size': Math.max(10, Math.min(16, (16 * (width - 20)) / estimateTextWidth(spec.title, 16))),
        'font-weight': 'bold',
      },
      spec.title,
    ),
    ...strips,
    axis,
  ];
  return svgDocument(width, height, FONT_PX, body);
}
