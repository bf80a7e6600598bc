/**
 * The dialect of a delimited table: which lines carry content, the field separator and the decimal mark.
 * Lines keep their 1-based numbers so every refusal can name the line an editor shows.
 */
import Papa from 'papaparse';
import { InputError } from '../errors.ts';

export interface ContentLine {
  /** 1-based line number in the file. */
  line: number;
  text: string;
}

export const WHITESPACE = 'whitespace';

/** Split text into lines (LF, CRLF or CR) and keep those that are neither blank nor `#` comments. */
export function contentLines(text: string): { lines: ContentLine[]; lineEnding: 'LF' | 'CRLF' | 'CR' } {
  const lineEnding = text.includes('\r\n') ? 'CRLF' : text.includes('\r') ? 'CR' : 'LF';
  const lines: ContentLine[] = [];
  text.split(/\r\n|\r|\n/).forEach((raw, i) => {
    const t = raw.trim();
    if (t !== '' && !t.startsWith('#')) lines.push({ line: i + 1, text: raw });
  });
  return { lines, lineEnding };
}

/** Accepts the names users type for a separator as well as the character itself. */
export function normalizeDelimiter(delimiter: string): string {
  const named: Record<string, string> = {
    comma: ',',
    semicolon: ';',
    tab: '\t',
    '\\t': '\t',
    space: WHITESPACE,
    whitespace: WHITESPACE,
    ' ': WHITESPACE,
  };
  const d = named[delimiter.toLowerCase()] ?? delimiter;
  if (d !== WHITESPACE && d.length !== 1) {
    throw new InputError('bad-option', `separator "${delimiter}" is not one character nor one of comma, semicolon, tab, whitespace`);
  }
  return d;
}

/**
 * Guess the separator from the first content lines: tab or semicolon when every line has one; comma when
 * every line has one, unless the commas are decimal marks inside whitespace-separated numbers
 * ("0,75  13,03"); otherwise runs of whitespace.
 */
export function detectDelimiter(sample: string[]): string {
  for (const c of ['\t', ';']) if (sample.every((l) => l.includes(c))) return c;
  if (sample.every((l) => l.includes(','))) {
    const tokens = sample.map((l) => l.trim().split(/\s+/));
    const decimalCommas = tokens.every(
      (t) => t.length >= 2 && t.length === tokens[tokens.length - 1].length && t.every((s) => !s.startsWith(',') && !s.endsWith(',')),
    );
    if (!decimalCommas) return ',';
  }
  return WHITESPACE;
}

/**
 * Split content lines into fields with papaparse (RFC 4180 quoting). Whitespace-separated lines are
 * re-joined with tabs first.
 */
export function splitFields(lines: ContentLine[], delimiter: string, file: string | undefined): string[][] {
  const whitespace = delimiter === WHITESPACE;
  const text = lines.map((l) => (whitespace ? l.text.trim().split(/\s+/).join('\t') : l.text)).join('\n');
  const parsed = Papa.parse<string[]>(text, { delimiter: whitespace ? '\t' : delimiter, newline: '\n', skipEmptyLines: false });
  const bad = parsed.errors.find((e) => e.type === 'Quotes');
  if (bad || parsed.data.length !== lines.length) {
    const row = bad?.row ?? 0;
    throw new InputError('unbalanced-quote', 'a quoted field is not closed on its line', { file, line: lines[Math.min(row, lines.length - 1)].line });
  }
  return parsed.data.map((r) => r.map((c) => c.trim()));
}

/** In a whitespace-separated header, glue a lone bracketed unit ("(nm)") to the name before it. */
export function glueUnits(fields: string[]): string[] {
  const out: string[] = [];
  for (const f of fields) {
    if (out.length > 0 && /^[([]/.test(f)) out[out.length - 1] += ` ${f}`;
    else out.push(f);
  }
  return out;
}

const DECIMAL_COMMA_NUMBER = /^[+-]?\d*,\d+(?:[eE][+-]?\d+)?$/;

/** A decimal comma is in use when the separator is not a comma and some data cell is written like "1,25". */
export function detectDecimalComma(rows: string[][], delimiter: string): boolean {
  if (delimiter === ',') return false;
  return rows.some((r) => r.some((c) => DECIMAL_COMMA_NUMBER.test(c)));
}
