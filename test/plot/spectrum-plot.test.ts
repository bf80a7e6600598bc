import { describe, expect, it } from 'vitest';
import { renderSpectrumPlot, type PlotSpec } from '../../src/plot/spectrum-plot.ts';
import { OKABE_ITO_PALETTE } from '../../src/plot/marks.ts';
import { placeLegend } from '../../src/plot/legend.ts';
import { findAll, parseSvg, polylinePoints, type SvgNode } from './svg-tree.ts';

/** A fit-like plot: measured points, model line, residuals (~1e-5) with a zero line; x in nm. */
function fitLikeSpec(): PlotSpec {
  const wavelengthNm = Array.from({ length: 36 }, (_, i) => 300 + 20 * i);
  const model = wavelengthNm.map((w) => 1.45 + 0.0036 / (w / 1000) ** 2); // Cauchy-shaped, invented
  const residual = wavelengthNm.map((_, i) => 2e-5 * Math.sin(i));
  return {
    title: 'SiO2 <film> & "A"',
    xLabel: 'Wavelength (nm)',
    panels: [
      {
        yLabel: 'n',
        relativeHeight: 3,
        series: [
          { label: 'measured n', x: wavelengthNm, y: model.map((v, i) => v + residual[i]), style: 'points' },
          { label: 'model n <Cauchy>', x: wavelengthNm, y: model, style: 'line' },
        ],
      },
      { yLabel: 'n − model', relativeHeight: 1, zeroLine: true, series: [{ label: 'residual', x: wavelengthNm, y: residual, style: 'points' }] },
    ],
  };
}

const panels = (root: SvgNode) => findAll(root, 'g', 'panel');
const seriesGroups = (node: SvgNode) => findAll(node, 'g', 'series');
const tickValues = (node: SvgNode, cls: 'x-tick' | 'y-tick') => findAll(node, 'g', cls).map((t) => Number(t.attrs['data-value']));
const frame = (panel: SvgNode) => findAll(panel, 'rect', 'frame')[0];

/** Every number in every attribute of the document (to check for NaN and rounding). */
function attributeValues(node: SvgNode): string[] {
  return [...Object.values(node.attrs), ...node.children.flatMap(attributeValues)];
}

/** A 1-2-5 × 10^k step between consecutive ticks (common practice for axis ticks). */
function expectNiceTicks(ticks: number[]): void {
  expect(ticks.length).toBeGreaterThanOrEqual(2);
  const step = ticks[1] - ticks[0];
  const mantissa = step / 10 ** Math.floor(Math.log10(step) + 1e-12);
  expect([1, 2, 5, 10].some((m) => Math.abs(mantissa - m) < 1e-9)).toBe(true);
  for (let i = 1; i < ticks.length; i++) expect(ticks[i] - ticks[i - 1]).toBeCloseTo(step, 12);
  for (const t of ticks) expect(Math.abs(t / step - Math.round(t / step))).toBeLessThan(1e-6);
}

describe('renderSpectrumPlot: document', () => {
  it('is a well-formed standalone SVG 1.1 document with size and viewBox', () => {
    const svg = renderSpectrumPlot({ ...fitLikeSpec(), width: 640, height: 480 });
    expect(svg.startsWith('<?xml version="1.0" encoding="UTF-8"?>\n<svg ')).toBe(true);
    const root = parseSvg(svg);
    expect(root.attrs).toMatchObject({ xmlns: 'http://www.w3.org/2000/svg', version: '1.1', width: '640', height: '480', viewBox: '0 0 640 480' });
  });

  it('defaults to 800 px wide and grows with the panel count', () => {
    const one = parseSvg(renderSpectrumPlot({ title: 't', xLabel: 'x', panels: [{ yLabel: 'y', series: [] }] }));
    const two = parseSvg(renderSpectrumPlot(fitLikeSpec()));
    expect(one.attrs.width).toBe('800');
    expect(Number(two.attrs.height)).toBeGreaterThan(Number(one.attrs.height));
  });

  it('carries title, axis labels and legend entries, escaped, as the caller gave them', () => {
    const svg = renderSpectrumPlot(fitLikeSpec());
    expect(svg).not.toContain('<film>');
    expect(svg).not.toContain('<Cauchy>');
    const root = parseSvg(svg);
    expect(findAll(root, 'title')[0].text).toBe('SiO2 <film> & "A"');
    expect(findAll(root, 'text', 'title')[0].text).toBe('SiO2 <film> & "A"');
    const axisLabels = findAll(root, 'text', 'axis-label').map((t) => t.text);
    expect(axisLabels).toEqual(['n', 'n − model', 'Wavelength (nm)']);
    const legend = panels(root).map((p) => findAll(p, 'g', 'legend-entry').map((e) => [e.attrs['data-label'], e.text]));
    expect(legend).toEqual([
      [
        ['measured n', 'measured n'],
        ['model n <Cauchy>', 'model n <Cauchy>'],
      ],
      [['residual', 'residual']],
    ]);
  });

  it('survives hostile labels (markup, quotes, control characters)', () => {
    const hostile = `"/><script>alert(1)</script>\u0007&amp;`;
    const svg = renderSpectrumPlot({
      title: hostile,
      xLabel: hostile,
      panels: [{ yLabel: hostile, series: [{ label: hostile, x: [1, 2], y: [1, 2], style: 'line' }] }],
    });
    expect(svg).not.toContain('<script');
    const root = parseSvg(svg);
    const expected = hostile.replace('\u0007', '\uFFFD');
    expect(findAll(root, 'g', 'series')[0].attrs['data-label']).toBe(expected);
    expect(findAll(root, 'g', 'legend-entry')[0].text).toBe(expected);
  });

  it('writes compact coordinates (at most 2 decimals) and never NaN', () => {
    const svg = renderSpectrumPlot(fitLikeSpec());
    expect(svg).not.toMatch(/NaN|Infinity/);
    const numbers = attributeValues(parseSvg(svg)).flatMap((v) => v.match(/-?\d+\.\d+(e-?\d+)?/g) ?? []);
    const coordinates = numbers.filter((n) => !n.includes('e'));
    expect(coordinates.length).toBeGreaterThan(100);
    // data-value attributes hold exact tick values (e.g. "0.00002" prints as "0.00002"); other numbers are px.
    const px = attributeValues(parseSvg(svg.replace(/data-value="[^"]*"/g, ''))).flatMap((v) => v.match(/-?\d+\.\d+/g) ?? []);
    for (const n of px) expect(n.split('.')[1].length).toBeLessThanOrEqual(2);
  });
});

describe('renderSpectrumPlot: series', () => {
  it('draws every series with all its points / polyline vertices, in the palette (Okabe–Ito: common practice)', () => {
    const spec = fitLikeSpec();
    const root = parseSvg(renderSpectrumPlot(spec));
    const [top, bottom] = panels(root);
    const [measured, model] = seriesGroups(top);
    expect(measured.attrs).toMatchObject({ 'data-label': 'measured n', 'data-style': 'points', 'data-count': '36' });
    expect(findAll(measured, 'circle')).toHaveLength(36);
    expect(model.attrs).toMatchObject({ 'data-label': 'model n <Cauchy>', 'data-style': 'line', 'data-count': '36' });
    const lines = findAll(model, 'polyline');
    expect(lines).toHaveLength(1);
    expect(polylinePoints(lines[0])).toHaveLength(36);
    expect(findAll(seriesGroups(bottom)[0], 'circle')).toHaveLength(36);
    expect(measured.attrs.fill).toBe(OKABE_ITO_PALETTE[0]);
    expect(model.attrs.stroke).toBe(OKABE_ITO_PALETTE[1]);
  });

  it('draws dashed series with a dash array and a matching legend swatch', () => {
    const root = parseSvg(
      renderSpectrumPlot({
        title: 't',
        xLabel: 'x',
        panels: [{ yLabel: 'y', series: [{ label: 'model k', x: [1, 2, 3], y: [3, 1, 2], style: 'dashed' }] }],
      }),
    );
    const series = seriesGroups(root)[0];
    expect(series.attrs['stroke-dasharray']).toBe('6 4');
    const swatch = findAll(findAll(root, 'g', 'legend-entry')[0], 'line', 'swatch')[0];
    expect(swatch.attrs['stroke-dasharray']).toBe('6 4');
    expect(swatch.attrs.stroke).toBe(series.attrs.stroke);
  });

  it('maps coordinates monotonically: larger x → larger px, larger y → smaller px, inside the frame', () => {
    const spec = fitLikeSpec();
    const root = parseSvg(renderSpectrumPlot(spec));
    const top = panels(root)[0];
    const box = frame(top);
    const [fx, fy, fw, fh] = ['x', 'y', 'width', 'height'].map((k) => Number(box.attrs[k]));
    const data = spec.panels[0].series[0];
    const circles = findAll(seriesGroups(top)[0], 'circle').map((c) => [Number(c.attrs.cx), Number(c.attrs.cy)]);
    for (let i = 0; i < circles.length; i++) {
      expect(circles[i][0]).toBeGreaterThanOrEqual(fx);
      expect(circles[i][0]).toBeLessThanOrEqual(fx + fw);
      expect(circles[i][1]).toBeGreaterThanOrEqual(fy);
      expect(circles[i][1]).toBeLessThanOrEqual(fy + fh);
      for (let j = 0; j < i; j++) {
        if (data.x[i] > data.x[j]) expect(circles[i][0]).toBeGreaterThan(circles[j][0]);
        if (data.y[i] > data.y[j] + 1e-4) expect(circles[i][1]).toBeLessThan(circles[j][1]);
      }
    }
  });

  it('breaks lines at NaN, skips NaN points, keeps an isolated vertex visible', () => {
    const x = [1, 2, 3, 4, 5, 6, 7];
    const y = [1, 2, NaN, 4, NaN, 6, 7];
    const root = parseSvg(
      renderSpectrumPlot({
        title: 'gaps',
        xLabel: 'x',
        panels: [
          {
            yLabel: 'y',
            series: [
              { label: 'line', x, y, style: 'line' },
              { label: 'pts', x: [...x, NaN], y: [...y, 1], style: 'points' },
            ],
          },
        ],
      }),
    );
    const [line, points] = seriesGroups(root);
    expect(line.attrs['data-count']).toBe('5');
    expect(findAll(line, 'polyline').map((p) => polylinePoints(p).length)).toEqual([2, 2]);
    expect(findAll(line, 'circle', 'isolated')).toHaveLength(1);
    expect(points.attrs['data-count']).toBe('5');
    expect(findAll(points, 'circle')).toHaveLength(5);
  });
});

describe('renderSpectrumPlot: axes', () => {
  it('puts nice ticks that cover the data on the shared x axis and on every y axis', () => {
    const spec = fitLikeSpec();
    const root = parseSvg(renderSpectrumPlot(spec));
    const xTicks = tickValues(findAll(root, 'g', 'x-axis')[0], 'x-tick');
    expectNiceTicks(xTicks);
    expect(xTicks[0]).toBeLessThanOrEqual(300);
    expect(xTicks[xTicks.length - 1]).toBeGreaterThanOrEqual(1000);
    panels(root).forEach((panel, i) => {
      const ys = spec.panels[i].series.flatMap((s) => s.y);
      const yTicks = tickValues(panel, 'y-tick');
      expectNiceTicks(yTicks);
      expect(yTicks[0]).toBeLessThanOrEqual(Math.min(...ys));
      expect(yTicks[yTicks.length - 1]).toBeGreaterThanOrEqual(Math.max(...ys));
    });
  });

  it('labels ticks readably: decimals without float noise, scientific for 1e-5 residuals', () => {
    const root = parseSvg(renderSpectrumPlot(fitLikeSpec()));
    const labels = (panel: SvgNode) => findAll(panel, 'g', 'y-tick').map((t) => t.text);
    const [top, bottom] = panels(root);
    for (const label of labels(top)) expect(label).toMatch(/^\d\.\d{1,3}$/);
    for (const label of labels(bottom)) expect(label).toMatch(/^(0|-?\d(\.\d)?e-\d)$/);
    expect(findAll(root, 'g', 'x-tick').map((t) => t.text)).toContain('500');
  });

  it('shows x tick labels once, under the bottom panel', () => {
    const root = parseSvg(renderSpectrumPlot(fitLikeSpec()));
    const xAxis = findAll(root, 'g', 'x-axis')[0];
    const [top, bottom] = panels(root);
    const bottomEdge = Number(frame(bottom).attrs.y) + Number(frame(bottom).attrs.height);
    for (const label of findAll(xAxis, 'text').filter((t) => !t.attrs.class)) expect(Number(label.attrs.y)).toBeGreaterThan(bottomEdge);
    expect(findAll(top, 'g', 'x-tick')).toHaveLength(0);
  });

  it('shares the height by relativeHeight', () => {
    const root = parseSvg(renderSpectrumPlot(fitLikeSpec()));
    const [top, bottom] = panels(root).map((p) => Number(frame(p).attrs.height));
    expect(top / bottom).toBeCloseTo(3, 2);
  });

  it('draws a dashed zero line at y = 0, and includes 0 in the axis when asked even if the data do not', () => {
    const root = parseSvg(
      renderSpectrumPlot({
        title: 'z',
        xLabel: 'x',
        panels: [{ yLabel: 'y', zeroLine: true, series: [{ label: 's', x: [1, 2], y: [5, 6], style: 'points' }] }],
      }),
    );
    const zero = findAll(root, 'line', 'zero-line')[0];
    expect(zero.attrs['stroke-dasharray']).toBeDefined();
    const zeroTick = findAll(root, 'g', 'y-tick').find((t) => t.attrs['data-value'] === '0')!;
    expect(findAll(zeroTick, 'line')[0].attrs.y1).toBe(zero.attrs.y1);
  });
});

describe('renderSpectrumPlot: degenerate data', () => {
  it('handles a constant series and a single point without NaN', () => {
    for (const series of [
      { label: 'constant', x: [400, 500, 600], y: [1.5, 1.5, 1.5], style: 'line' as const },
      { label: 'one point', x: [633], y: [0], style: 'points' as const },
    ]) {
      const svg = renderSpectrumPlot({ title: series.label, xLabel: 'Wavelength (nm)', panels: [{ yLabel: 'n', series: [series] }] });
      expect(svg).not.toMatch(/NaN|Infinity/);
      const root = parseSvg(svg);
      expect(seriesGroups(root)[0].attrs['data-count']).toBe(String(series.x.length));
      const yTicks = tickValues(root, 'y-tick');
      expectNiceTicks(yTicks);
      expect(yTicks[0]).toBeLessThan(series.y[0]);
      expect(yTicks[yTicks.length - 1]).toBeGreaterThan(series.y[0]);
      const xTicks = tickValues(root, 'x-tick');
      expect(xTicks[0]).toBeLessThanOrEqual(Math.min(...series.x));
      expect(xTicks[xTicks.length - 1]).toBeGreaterThanOrEqual(Math.max(...series.x));
    }
  });

  it('says "no data" for an empty panel and still draws the others', () => {
    const root = parseSvg(
      renderSpectrumPlot({
        title: 'partial',
        xLabel: 'x',
        panels: [
          { yLabel: 'n', series: [{ label: 'n', x: [1, 2], y: [1, 2], style: 'line' }] },
          { yLabel: 'k', series: [{ label: 'k', x: [1, 2], y: [NaN, NaN], style: 'line' }] },
          { yLabel: 'other', series: [] },
        ],
      }),
    );
    const [full, allNaN, empty] = panels(root);
    expect(findAll(full, 'text', 'no-data')).toHaveLength(0);
    expect(findAll(allNaN, 'text', 'no-data')[0].text).toBe('no data');
    expect(findAll(empty, 'text', 'no-data')[0].text).toBe('no data');
    expect(tickValues(empty, 'y-tick')).toEqual([]);
  });

  it('renders a plot without any data or panels as a valid document', () => {
    for (const spec of [
      { title: 'empty', xLabel: 'x', panels: [] },
      { title: 'empty', xLabel: 'x', panels: [{ yLabel: 'y', series: [{ label: 's', x: [], y: [], style: 'points' as const }] }] },
    ]) {
      const svg = renderSpectrumPlot(spec);
      expect(svg).not.toMatch(/NaN|Infinity/);
      expect(findAll(parseSvg(svg), 'text', 'no-data')).toHaveLength(1);
    }
  });

  it('refuses caller bugs with a RangeError naming the series or field', () => {
    expect(() =>
      renderSpectrumPlot({ title: 't', xLabel: 'x', panels: [{ yLabel: 'y', series: [{ label: 'bad', x: [1, 2], y: [1], style: 'line' }] }] }),
    ).toThrow(/"bad" has 2 x values but 1 y values/);
    expect(() => renderSpectrumPlot({ title: 't', xLabel: 'x', panels: [], width: 0 })).toThrow(RangeError);
    expect(() => renderSpectrumPlot({ title: 't', xLabel: 'x', panels: [{ yLabel: 'y', series: [], relativeHeight: -1 }] })).toThrow(RangeError);
  });
});

describe('legend placement', () => {
  const area = { left: 100, top: 50, width: 600, height: 300 };
  const size = { width: 120, height: 44 };
  const corner = (box: { left: number; top: number } | null) =>
    box === null ? 'none' : `${box.top < area.top + area.height / 2 ? 'top' : 'bottom'}-${box.left < area.left + area.width / 2 ? 'left' : 'right'}`;

  it('prefers top-right when it is free', () => {
    expect(
      corner(
        placeLegend(area, size, [
          [
            [150, 300],
            [650, 300],
          ],
        ]),
      ),
    ).toBe('top-right');
  });

  it('moves to the corner that hides the fewest marks, counting line segments between vertices', () => {
    // A line from the lower left to the upper right: two vertices only, the segment crosses top-right.
    expect(
      corner(
        placeLegend(area, size, [
          [
            [100, 350],
            [700, 50],
          ],
        ]),
      ),
    ).toBe('top-left');
    // Points near both top corners and bottom-right: bottom-left is the free one.
    expect(corner(placeLegend(area, size, [[[120, 70]], [[680, 70]], [[680, 330]]]))).toBe('bottom-left');
  });

  it('leaves the data uncovered in a rendered plot where a free corner exists', () => {
    const x = Array.from({ length: 200 }, (_, i) => 400 + i * 3);
    const root = parseSvg(
      renderSpectrumPlot({
        title: 'legend',
        xLabel: 'x',
        width: 600,
        height: 400,
        panels: [{ yLabel: 'y', series: [{ label: 'rising', x, y: x, style: 'points' }] }],
      }),
    );
    const legendBox = findAll(findAll(root, 'g', 'legend')[0], 'rect')[0];
    const [bx, by, bw, bh] = ['x', 'y', 'width', 'height'].map((k) => Number(legendBox.attrs[k]));
    const covered = findAll(seriesGroups(root)[0], 'circle').filter((c) => {
      const cx = Number(c.attrs.cx);
      const cy = Number(c.attrs.cy);
      return cx >= bx && cx <= bx + bw && cy >= by && cy <= by + bh;
    });
    expect(covered).toHaveLength(0);
  });
});
