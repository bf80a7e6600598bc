/** One parser for numbers typed as option values (flags and API fields): the refusal names the option and the rule. */
import { describe, expect, it } from 'vitest';
import { parseOptionNumber } from '../../src/io/numbers.ts';

describe('parseOptionNumber', () => {
  it('reads finite numbers and refuses blanks, words and infinities', () => {
    expect(parseOptionNumber('1e-3', '--k-tolerance', { min: 0 })).toBe(0.001);
    for (const text of ['', ' ', 'abc', 'Infinity', 'NaN'])
      expect(() => parseOptionNumber(text, '--tolerance')).toThrow(`--tolerance: "${text}" is not a number`);
  });

  it('says what was expected', () => {
    expect(() => parseOptionNumber('0', '--tolerance', { above: 0, hint: 'a misfit in n, e.g. 0.005' })).toThrow(
      '--tolerance 0: expected a positive number (a misfit in n, e.g. 0.005)',
    );
    expect(() => parseOptionNumber('-1', '--k-tolerance', { min: 0 })).toThrow('--k-tolerance -1: expected a non-negative number');
    expect(() => parseOptionNumber('2.5', '--starts', { integer: true, min: 1, max: 1000 })).toThrow('--starts 2.5: expected a whole number 1–1000');
    expect(() => parseOptionNumber('70000', '--port', { integer: true, min: 0, max: 65535 })).toThrow(
      '--port 70000: expected a whole number 0–65535',
    );
    expect(parseOptionNumber('8787', '--port', { integer: true, min: 0, max: 65535 })).toBe(8787);
  });
});
