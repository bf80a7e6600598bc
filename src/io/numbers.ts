/** Reading one numeric cell strictly, with a refusal that names where it is and which rule it broke. */
import { InputError, type InputLocation } from '../errors.ts';

/** The one decimal grammar of nkledger: table cells, option values, API fields (no hex, no NaN, no empty text). */
export const NUMBER_PATTERN = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;
const NUMBER = NUMBER_PATTERN;
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

/** What an option's number must be: a whole number, within [min, max], above a bound (0 for "positive"). */
export interface NumberRule {
  integer?: boolean;
  min?: number;
  max?: number;
  above?: number;
  /** Added to the refusal in brackets, e.g. "a misfit in n, e.g. 0.005". */
  hint?: string;
}

function expectation(rule: NumberRule): string {
  const kind = rule.integer ? 'whole number' : 'number';
  if (rule.min !== undefined && rule.max !== undefined) return `a ${kind} ${rule.min}–${rule.max}`;
  if (rule.above === 0) return `a positive ${kind}`;
  if (rule.min === 0) return `a non-negative ${kind}`;
  if (rule.above !== undefined) return `a ${kind} above ${rule.above}`;
  if (rule.min !== undefined) return `a ${kind} ≥ ${rule.min}`;
  return rule.max !== undefined ? `a ${kind} ≤ ${rule.max}` : `a ${kind}`;
}

/**
 * A number typed as the value of an option (a CLI flag or an API field), refused as `bad-option` naming the option
 * as the user spelled it: `--tolerance: "x" is not a number`, `--starts 0: expected a whole number 1–1000`.
 */
export function parseOptionNumber(text: string, what: string, rule: NumberRule = {}): number {
  // The cells' decimal grammar, not Number(): that would read "0x1F4" as 500, "0b11" as 3, "" as 0.
  const trimmed = text.trim();
  const value = NUMBER.test(trimmed) ? Number(trimmed) : NaN;
  if (!Number.isFinite(value)) throw new InputError('bad-option', `${what}: "${text}" is not a number (decimal digits, e.g. 500 or 1.5e3)`);
  const ok =
    (!rule.integer || Number.isInteger(value)) &&
    (rule.min === undefined || value >= rule.min) &&
    (rule.max === undefined || value <= rule.max) &&
    (rule.above === undefined || value > rule.above);
  if (!ok) throw new InputError('bad-option', `${what} ${text}: expected ${expectation(rule)}${rule.hint ? ` (${rule.hint})` : ''}`);
  return value;
}
