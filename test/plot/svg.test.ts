import { describe, expect, it } from 'vitest';
import { element, escapeXml, estimateTextWidth, num, pointsAttribute, textElement } from '../../src/plot/svg.ts';
import { parseSvg } from './svg-tree.ts';

describe('escapeXml (XML 1.0 predefined entities: published, W3C XML 1.0 §4.6)', () => {
  it('escapes the five markup characters', () => {
    expect(escapeXml(`<a href="x">Tom & 'Jerry'</a>`)).toBe('&lt;a href=&quot;x&quot;&gt;Tom &amp; &apos;Jerry&apos;&lt;/a&gt;');
  });

  it('replaces characters XML 1.0 cannot carry, keeps tabs, newlines and astral characters', () => {
    expect(escapeXml('a\u0001b\u001Fc\uFFFF')).toBe('a\uFFFDb\uFFFDc\uFFFD');
    expect(escapeXml('x\ty\nz')).toBe('x\ty\nz');
    expect(escapeXml('\uD800x')).toBe('\uFFFDx'); // lone surrogate
    expect(escapeXml('ε₂ 😀 λ (nm)')).toBe('ε₂ 😀 λ (nm)');
  });

  it('produces text that parses back to the original', () => {
    const hostile = `</text><script>alert("x")</script> & ]]> '`;
    const doc = `<svg xmlns="http://www.w3.org/2000/svg">${textElement({ 'data-label': hostile }, hostile)}</svg>`;
    const root = parseSvg(doc);
    expect(root.children[0].text).toBe(hostile);
    expect(root.children[0].attrs['data-label']).toBe(hostile);
  });
});

describe('num', () => {
  it('rounds to 2 decimals with the shortest text', () => {
    expect(num(12.345678)).toBe('12.35');
    expect(num(0.1 + 0.2)).toBe('0.3');
    expect(num(100)).toBe('100');
    expect(num(-0.001)).toBe('0');
  });

  it('refuses non-finite coordinates rather than writing NaN into the document', () => {
    expect(() => num(NaN)).toThrow(RangeError);
    expect(() => num(Infinity)).toThrow(RangeError);
  });
});

describe('element', () => {
  it('writes self-closing and nested elements, skipping undefined/false attributes', () => {
    expect(element('circle', { cx: 1.234, cy: 2, r: 3, class: undefined, hidden: false })).toBe('<circle cx="1.23" cy="2" r="3"/>');
    expect(element('g', { class: 'a"b' }, ['<x/>', '<y/>'])).toBe('<g class="a&quot;b"><x/><y/></g>');
  });

  it('writes polyline points', () => {
    expect(pointsAttribute([[1.111, 2], [3, 4.567]])).toBe('1.11,2 3,4.57');
  });

  it('estimates text width from the character count', () => {
    expect(estimateTextWidth('1.90', 12)).toBeCloseTo(4 * 0.6 * 12);
    expect(estimateTextWidth('😀', 10)).toBeCloseTo(6); // one code point, not two UTF-16 units
  });
});
