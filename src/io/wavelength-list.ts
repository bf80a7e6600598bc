/** Parsing lists of wavelengths in nm (the `at` option): "400,500,632.8", or a grid "400:800:50" (start:stop:step), or both mixed. */
import { InputError, optionRef } from '../errors.ts';
import { parseOptionNumber } from './numbers.ts';

/** Refuse grids bigger than this: a typo like 400:800:0.0001 should not allocate millions of points. */
const MAX_POINTS = 100_000;

export function parseWavelengthList(text: string, flag = optionRef('at')): number[] {
  const out: number[] = [];
  for (const item of text.split(',')) {
    const parts = item.split(':');
    if (parts.length === 1) out.push(parseOptionNumber(parts[0], flag));
    else if (parts.length === 3) {
      const [start, stop, step] = parts.map((p) => parseOptionNumber(p, flag));
      if (!(step > 0) || stop < start) throw new InputError('bad-option', `${flag}: grid "${item}" needs start ≤ stop and a positive step`);
      const count = Math.floor((stop - start) / step + 1e-9) + 1;
      if (out.length + count > MAX_POINTS) throw new InputError('bad-option', `${flag}: more than ${MAX_POINTS} wavelengths`);
      // start + i·step (not repeated addition) keeps 632.8-style grids free of accumulated rounding.
      for (let i = 0; i < count; i++) out.push(+(start + i * step).toPrecision(12));
    } else throw new InputError('bad-option', `${flag}: "${item}" is neither a number nor start:stop:step`);
  }
  return out;
}
