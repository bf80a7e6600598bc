/**
 * The front of every delimited-text import (n,k tables in parse-table.ts, Ψ/Δ in parse-psi-delta.ts): decode,
 * content lines, header and preamble, separator, fields, decimal comma; then the row reader, the units row
 * and the unit of the x column. Each importer brings its own column names (`recognize`) and its own checks.
 * Pure: takes the content, never reads a file.
 */
import { InputError } from '../errors.ts';
import { parseSpectralUnit, type SpectralUnit } from '../optics/units.ts';
import { IMPLIED_UNIT, type RecognizedColumn } from './columns.ts';
import { decodeText, type DecodedText } from './decode.ts';
import {
  type ContentLine,
  contentLines,
  detectDecimalComma,
  detectDelimiter,
  glueUnits,
  normalizeDelimiter,
  splitFields,
  WHITESPACE,
} from './dialect.ts';
import { locateHeader, type LocatedHeader, unitCell } from './header.ts';
import { DEFAULT_MAX_BYTES, type ImportOptions } from './import-types.ts';
import type { ParsedRow } from './normalize.ts';
import { parseNumberCell } from './numbers.ts';
import { unitGuess } from './plausible.ts';

/** Lines looked at to guess the separator. */
const DIALECT_SAMPLE_LINES = 20;
/** Wavelength columns without a unit are read as nm only when every value lies in this range. */
const BARE_WAVELENGTH_NM_RANGE: [number, number] = [100, 100_000];

export interface DelimitedText {
  decoded: DecodedText;
  lineEnding: 'LF' | 'CRLF' | 'CR';
  located: LocatedHeader;
  /** Header (if any) and data lines. */
  lines: ContentLine[];
  /** Fields of `lines`, row by row. */
  rows: string[][];
  delimiter: string;
  decimalComma: boolean;
  header: boolean;
  headerLine?: number;
  unitsLine?: ContentLine;
  /** Column names: the header's, or the columns option's. */
  names: string[];
  /** Index into `rows` of the first data row. */
  dataStart: number;
}

/**
 * Decode, find the header, the separator and the decimal mark, split the fields. `recognize` tells whether a
 * name is a known column (used to split a whitespace-separated header whose names hold spaces).
 */
export function readDelimited(
  input: string | Uint8Array,
  options: Pick<ImportOptions, 'file' | 'maxBytes' | 'headerLine' | 'delimiter' | 'decimalComma' | 'columns'>,
  recognize: (name: string) => boolean,
  example: string,
): DelimitedText {
  const file = options.file;
  const decoded = decodeText(input, file, options.maxBytes ?? DEFAULT_MAX_BYTES);
  const { lines: allLines, lineEnding } = contentLines(decoded.text);
  if (allLines.length === 0) throw new InputError('empty-file', 'the file holds no table (only blank or comment lines)', { file });

  const located = locateHeader(allLines, options.headerLine, file);
  const header = located.header !== undefined;
  // The table proper: header (if any) and data rows; the units row is read on its own.
  const lines = header ? [allLines[located.header!], ...allLines.slice(located.dataStart)] : allLines;
  const unitsLine = located.units === undefined ? undefined : allLines[located.units];
  const delimiter =
    options.delimiter !== undefined
      ? normalizeDelimiter(options.delimiter)
      : detectDelimiter(lines.slice(0, DIALECT_SAMPLE_LINES).map((l) => l.text));
  if (options.decimalComma && delimiter === ',') {
    throw new InputError(
      'bad-option',
      'decimal commas need a separator other than a comma',
      { file },
      {
        option: 'decimal_comma',
        value: 'true',
      },
    );
  }
  const rows = splitFields(lines, delimiter, file);
  const decimalComma = options.decimalComma ?? detectDecimalComma(rows.slice(header ? 1 : 0), delimiter);
  const headerLine = header ? lines[0].line : undefined;
  if (header && delimiter === WHITESPACE) rows[0] = splitWhitespaceHeader(lines[0].text, rows[0], rows[1], recognize);

  if (!header && options.columns === undefined) {
    throw new InputError(
      'no-header',
      'the first line is data, not a header: name the columns (and the unit of x)',
      { file, line: lines[0].line },
      {
        remedies: [
          { option: 'columns', value: example },
          { option: 'header_line', value: 'N' },
        ],
      },
    );
  }
  // A trailing separator on the header line ("wavelength,n,k,") names no column.
  const names = options.columns ?? (rows[0].length > 1 && rows[0][rows[0].length - 1] === '' ? rows[0].slice(0, -1) : rows[0]);
  const dataStart = header ? 1 : 0;
  if (rows.length - dataStart === 0)
    throw new InputError('header-only', 'the file has a header but no data rows', { file, line: unitsLine?.line ?? headerLine });
  return { decoded, lineEnding, located, lines, rows, delimiter, decimalComma, header, headerLine, unitsLine, names, dataStart };
}

/** The data rows read cell by cell (strict numbers) into the roles given; at least two rows. */
export function readRows(text: DelimitedText, roles: string[], file: string | undefined): ParsedRow[] {
  const parsed: ParsedRow[] = [];
  for (let r = text.dataStart; r < text.rows.length; r++) {
    parsed.push(readRow(text.rows[r], text.lines[r].line, text.names.length, roles, text.decimalComma, file));
  }
  if (parsed.length < 2) throw new InputError('too-few-rows', 'only one data row; a table needs at least two', { file, line: parsed[0].line });
  return parsed;
}

function readRow(cells: string[], line: number, expected: number, roles: string[], decimalComma: boolean, file?: string): ParsedRow {
  // A trailing separator ("1,2,3,") leaves one empty extra field: tolerated.
  const fields = cells.length === expected + 1 && cells[expected] === '' ? cells.slice(0, expected) : cells;
  if (fields.length !== expected) {
    throw new InputError('field-count', `${fields.length} field(s) where the header has ${expected}`, {
      file,
      line,
      column: Math.min(fields.length, expected) + 1,
    });
  }
  const values: Record<string, number> = {};
  roles.forEach((role, i) => {
    if (role !== 'ignore') values[role] = parseNumberCell(fields[i], decimalComma, { file, line, column: i + 1 });
  });
  return { line, values: values as ParsedRow['values'] };
}

/**
 * A whitespace-separated header whose names hold spaces ("Photon energy (eV)   n   k"): when splitting at
 * every space gives more names than the first data row has fields, split at runs of two or more spaces (or
 * tabs), else group the words into known column names from the left.
 */
function splitWhitespaceHeader(text: string, words: string[], firstRow: string[] | undefined, recognize: (name: string) => boolean): string[] {
  const glued = glueUnits(words);
  const width = firstRow?.filter((c, i) => c !== '' || i < firstRow.length - 1).length;
  if (width === undefined || glued.length <= width) return glued;
  const wide = glueUnits(
    text
      .trim()
      .split(/\t|\s{2,}/)
      .map((c) => c.trim()),
  );
  if (wide.length === width) return wide;
  return groupKnownNames(glued, width, recognize) ?? glued;
}

/** Split words into `count` consecutive groups that are each a known column name, if there is such a split. */
function groupKnownNames(words: string[], count: number, recognize: (name: string) => boolean): string[] | undefined {
  if (count === 1) {
    const name = words.join(' ');
    return recognize(name) ? [name] : undefined;
  }
  for (let take = 1; take <= words.length - count + 1; take++) {
    const name = words.slice(0, take).join(' ');
    if (!recognize(name)) continue;
    const rest = groupKnownNames(words.slice(take), count - 1, recognize);
    if (rest) return [name, ...rest];
  }
  return undefined;
}

/** The units row's cells, when there is one. */
export function unitsRowOf(text: DelimitedText, file: string | undefined): string[] | undefined {
  return text.unitsLine === undefined ? undefined : splitFields([text.unitsLine], text.delimiter, file)[0];
}

/** The x column's unit from the units row when the header gives none; a contradiction is refused. */
export function withUnitsRow(
  x: RecognizedColumn,
  cell: string | undefined,
  where: { file?: string; line?: number; column?: number },
): RecognizedColumn {
  const text = cell === undefined ? undefined : unitCell(cell);
  if (text === undefined || text === '' || parseSpectralUnit(text) === undefined) return x;
  if (x.unitText !== undefined && x.unitText !== '') {
    if (parseSpectralUnit(x.unitText) !== parseSpectralUnit(text)) {
      throw new InputError('unit-conflict', `the units row says "${text}" for the x column, whose header says "${x.unitText}"`, where);
    }
    return x;
  }
  return { ...x, unitText: text, unit: parseSpectralUnit(text) };
}

/** Unit of the x column from the header; energy and wavenumber imply eV and cm⁻¹; a bare wavelength is nm if plausible. */
export function resolveXUnit(
  x: RecognizedColumn,
  rows: ParsedRow[],
  where: { file?: string; line?: number; column?: number },
  warnings: string[],
): SpectralUnit {
  if (x.unitText !== undefined && x.unitText !== '') {
    const unit = x.unit ?? parseSpectralUnit(x.unitText);
    if (unit === undefined) {
      throw new InputError('unknown-unit', `unknown unit "${x.unitText}" for the x column (known: nm, µm/um, Å/A, eV, cm-1)`, where);
    }
    return unit;
  }
  const implied = x.xKind ? IMPLIED_UNIT[x.xKind] : undefined;
  if (implied) return implied;
  const xs = rows.map((r) => r.values.x as number);
  const lo = xs.reduce((a, b) => Math.min(a, b));
  const hi = xs.reduce((a, b) => Math.max(a, b));
  if (lo >= BARE_WAVELENGTH_NM_RANGE[0] && hi <= BARE_WAVELENGTH_NM_RANGE[1]) {
    warnings.push(`the wavelength column has no unit; values ${lo}–${hi} read as nm (set the input unit to say otherwise)`);
    return 'nm';
  }
  const guess = unitGuess(lo, hi, x.xKind, undefined);
  throw new InputError(
    'missing-unit',
    `the wavelength column has no unit and values ${lo}–${hi} are not plausibly nm${guess ? `; they look like ${guess.label}` : ''}`,
    where,
    { remedies: [{ option: 'input_unit', value: guess?.unit ?? 'um' }] },
  );
}

export { WHITESPACE };
