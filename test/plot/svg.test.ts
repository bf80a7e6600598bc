import { describe, expect, it } from 'vitest';
import { element, escapeXml, estimateTextWidth, num, pointsAttribute, shortenMiddle, textElement, wrapText } from '../../src/plot/svg.ts';
import { parseSvg } from './svg-tree.ts';

describe('escapeXml (XML 1.0 predefined entities: W3C XML 1.0 §4.6)', () => {
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
    expect(
      pointsAttribute([
        [1.111, 2],
        [3, 4.567],
      ]),
    ).toBe('1.11,2 3,4.57');
  });

  it('estimates text width from the character count', () => {
    expect(estimateTextWidth('1.90', 12)).toBeCloseTo(4 * 0.6 * 12);
    expect(estimateTextWidth('😀', 10)).toBeCloseTo(6); // one code point, not two UTF-16 units
  });
});

describe('wrapText and shortenMiddle (12 px regular: 7.2 px per character)', () => {
  it('keeps text that fits on one line', () => {
    expect(wrapText('n of MgF2', 100, 12, 2)).toEqual(['n of MgF2']);
  });

  it('breaks after a colon when both parts fit, else greedily at spaces', () => {
    expect(wrapText('check of a.csv: consistent (max 1e-3)', 200, 12, 2)).toEqual(['check of a.csv:', 'consistent (max 1e-3)']);
    expect(wrapText('one two three four five six', 100, 12, 2)).toEqual(['one two three', 'four five six']);
  });

  it('shortens a word longer than a line, and the last line when more lines would be needed', () => {
    expect(shortenMiddle('abcdefghijklmnopqrstuvwxyz', 72, 12)).toBe('abcde…wxyz');
    expect(wrapText('abcdefghijklmnopqrstuvwxyz', 72, 12, 2)).toEqual(['abcde…wxyz']);
    const lines = wrapText('aaa bbb ccc ddd eee fff ggg hhh', 60, 12, 2);
    expect(lines).toEqual(['aaa bbb', 'ccc …hhh']);
    for (const line of lines) expect(estimateTextWidth(line, 12)).toBeLessThanOrEqual(60);
  });
});
