/**
 * Where the table starts in an instrument export: metadata lines ("Sample: TA-0412", "Angles: 65 70 75")
 * above the header form the preamble, kept verbatim; the header is the last text line above the first run
 * of numeric rows of one width; a units row ("nm,,", "[nm] [-] [-]", "(eV)") directly under the header
 * gives the columns' units. Works on content lines (blank and `#` lines already dropped), before the
 * separator is known, so it splits loosely on spaces, commas and semicolons.
 */
import { InputError } from '../errors.ts';
import { parseSpectralUnit } from '../optics/units.ts';
import type { ContentLine } from './dialect.ts';

const NUMBER_TOKEN = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

function looseTokens(text: string): string[] {
  return text
    .trim()
    .split(/[\s,;]+/)
    .map((t) => t.replace(/^"|"$/g, ''))
    .filter((t) => t !== '');
}

/** Every token a number (a decimal comma splits into two numbers, which is harmless here). */
function isNumericLine(tokens: string[]): boolean {
  return tokens.length > 0 && tokens.every((t) => NUMBER_TOKEN.test(t));
}

/** No token a number: a header, a units row or a metadata line such as "Operator: R. Okafor". */
function isTextLine(tokens: string[]): boolean {
  return tokens.length > 0 && !tokens.some((t) => NUMBER_TOKEN.test(t));
}

/** Dimensionless marks a units row uses for n, k and ε (common practice in exports). */
const DIMENSIONLESS = new Set(['', '-', '–', 'a.u.', 'au', 'arb.u.', 'arb. u.', '1', 'none', 'dimensionless']);

/** The unit text of one units-row cell with its brackets removed, or undefined when it is no unit. */
export function unitCell(cell: string): string | undefined {
  const t = cell.trim();
  const inner = /^[([]\s*(.*?)\s*[)\]]$/.exec(t)?.[1] ?? t;
  // A bare "1" could be data; only "[1]" / "(1)" counts as dimensionless.
  if (inner === '1' && inner === t) return undefined;
  if (DIMENSIONLESS.has(inner.toLowerCase()) || parseSpectralUnit(inner) !== undefined) return inner;
  return undefined;
}

/** A units row: every token a unit or a dimensionless mark, and at least one of them. */
export function isUnitsRow(text: string): boolean {
  const tokens = looseTokens(text);
  return tokens.length > 0 && tokens.every((t) => unitCell(t) !== undefined);
}

export interface LocatedHeader {
  /** Index (into the content lines) of the header, or undefined for a headerless table. */
  header?: number;
  /** Index of the units row under the header, when there is one. */
  units?: number;
  /** Index of the first data row. */
  dataStart: number;
  /** Content lines above the header, verbatim (trimmed), in file order. */
  preamble: ContentLine[];
}

/**
 * Find the header. With `headerLine` (1-based physical line) the caller says where it is; otherwise it is
 * the last text line above the first run of numeric rows of one width (a lone numeric line in the preamble,
 * such as "65 70 75", is no run), not counting a units row directly above the data. No text line above the
 * data: headerless. No numeric row at all: the first line is taken as the header, and its data rows are
 * refused cell by cell (as before the preamble was understood).
 */
export function locateHeader(lines: ContentLine[], headerLine: number | undefined, file: string | undefined): LocatedHeader {
  const tokens = lines.map((l) => looseTokens(l.text));
  let header: number | undefined;
  if (headerLine !== undefined) {
    header = lines.findIndex((l) => l.line === headerLine);
    if (header < 0) {
      throw new InputError(
        'bad-header-line',
        `line ${headerLine} is not a content line of the file (it is blank, a # comment or past the end)`,
        { file },
        {
          option: 'header_line',
          value: String(headerLine),
        },
      );
    }
  } else {
    const firstRun = tokens.findIndex(
      (t, i) => isNumericLine(t) && (i + 1 === tokens.length || (isNumericLine(tokens[i + 1]) && tokens[i + 1].length === t.length)),
    );
    const dataAt = firstRun >= 0 ? firstRun : tokens.findIndex(isNumericLine);
    if (dataAt < 0) header = 0;
    else {
      for (let i = dataAt - 1; i >= 0; i--) {
        if (isTextLine(tokens[i])) {
          header = i;
          break;
        }
      }
      // The last text line is a units row and the line above it is text: that one is the header.
      if (header !== undefined && header > 0 && isUnitsRow(lines[header].text) && isTextLine(tokens[header - 1])) header--;
    }
  }
  if (header === undefined) return { dataStart: 0, preamble: [] };
  const units = header + 1 < lines.length && isUnitsRow(lines[header + 1].text) ? header + 1 : undefined;
  return {
    header,
    units,
    dataStart: (units ?? header) + 1,
    preamble: lines.slice(0, header).map((l) => ({ line: l.line, text: l.text.trim() })),
  };
}
