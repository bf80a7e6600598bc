/** The colour-strip SVG: well-formed, one swatch per value in the order given, swatches tiling the axis. */
import { XMLParser } from 'fast-xml-parser';
import { describe, expect, it } from 'vitest';
import { renderColourStrips } from '../../src/plot/colour-strip.ts';

const parse = (svg: string) => new XMLParser({ ignoreAttributes: false, attributeNamePrefix: '' }).parse(svg);

describe('renderColourStrips', () => {
  it('draws one strip per row and one swatch per value, adjacent swatches touching', () => {
    const svg = renderColourStrips({
      title: 'Film <test> & "colours"',
      xLabel: 'thickness (nm)',
      strips: [
        { label: '0°', x: [0, 10, 20, 30], colours: ['#000000', '#ff0000', '#00ff00', '#0000ff'] },
        { label: '60°', x: [0, 10, 20, 30], colours: ['#111111', '#222222', '#333333', '#444444'] },
      ],
    });
    const doc = parse(svg);
    const strips = [doc.svg.g].flat().filter((g: { class: string }) => g.class === 'strip');
    expect(strips.map((s: { 'data-label': string }) => s['data-label'])).toEqual(['0°', '60°']);
    const swatches = strips[0].rect.filter((r: { class?: string }) => r.class === 'swatch');
    expect(swatches.map((r: { fill: string }) => r.fill)).toEqual(['#000000', '#ff0000', '#00ff00', '#0000ff']);
    for (let i = 1; i < swatches.length; i++) {
      const prevEnd = Number(swatches[i - 1].x) + Number(swatches[i - 1].width);
      expect(Math.abs(prevEnd - Number(swatches[i].x))).toBeLessThan(0.5);
    }
    expect(doc.svg.title).toBe('Film <test> & "colours"');
  });

  it('refuses caller bugs: lengths that differ, colours that are not #rrggbb', () => {
    expect(() => renderColourStrips({ title: 't', xLabel: 'x', strips: [{ label: 'a', x: [1, 2], colours: ['#000000'] }] })).toThrow(RangeError);
    expect(() => renderColourStrips({ title: 't', xLabel: 'x', strips: [{ label: 'a', x: [1], colours: ['red'] }] })).toThrow(RangeError);
  });
});
