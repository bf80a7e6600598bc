/** Reading one numeric cell strictly, with a refusal that names where it is and which rule it broke. */
import { InputError, type InputLocation } from '../errors.ts';

const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const NOT_FINITE = /^[+-]?(?:nan|inf|infinity|∞)$/i;

/** True when the cell reads as a number (with the given decimal mark); used to tell headers from data. */
export function isNumberCell(cell: string, decimalComma: boolean): boolean {
  return NUMBER.test(decimalComma ? cell.replace(',', '.') : cell);
}

/** Parse a cell as a finite number or throw non-numeric / non-finite / overflow with its location. */
export function parseNumberCell(cell: string, decimalComma: boolean, where: InputLocation): number {
  const text = decimalComma ? cell.replace(',', '.') : cell;
  if (NOT_FINITE.test(text)) throw new InputError('non-finite', `"${cell}" is not a finite number (NaN and infinities are refused)`, where);
  if (!NUMBER.test(text)) {
    const what = cell === '' ? 'empty cell where a number is expected' : `"${cell}" is not a number`;
    const hint = !decimalComma && /^[+-]?\d*,\d+$/.test(cell) ? ' (decimal commas need a separator other than a comma)' : '';
    throw new InputError('non-numeric', what + hint, where);
  }
  const value = Number(text);
  if (!Number.isFinite(value)) throw new InputError('overflow', `"${cell}" overflows a double-precision number`, where);
  return value;
}
