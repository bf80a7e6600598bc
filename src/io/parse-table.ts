/**
 * Import of tabulated optical constants from delimited text in the dialects instruments export:
 * comma, semicolon, tab or whitespace separated; decimal commas (when the separator is not a comma);
 * UTF-8 BOM; LF, CRLF or CR; `#` comment lines; blank lines; x in nm, µm, Å, eV or cm⁻¹; n,k or ε1,ε2;
 * optional 1σ columns. Explicit options always override detection. Anything doubtful is refused with
 * an InputError naming file, 1-based line, column and rule; nothing is half-accepted.
 * Pure: takes the content, never reads a file (see src/service/source.ts for that).
 */
import { InputError } from '../errors.ts';
import { parseSpectralUnit, type SpectralUnit } from '../optics/units.ts';
import { ACCEPTED_NAMES_SUMMARY, IMPLIED_UNIT, recognizeColumn, type RecognizedColumn } from './columns.ts';
import { decodeText } from './decode.ts';
import { contentLines, detectDecimalComma, detectDelimiter, glueUnits, normalizeDelimiter, splitFields, WHITESPACE } from './dialect.ts';
import { locateHeader, unitCell } from './header.ts';
import { checkPlausibleRange, unitGuess } from './plausible.ts';
import {
  DEFAULT_K_TOLERANCE,
  DEFAULT_MAX_BYTES,
  type ColumnRole,
  type DetectedFormat,
  type ImportOptions,
  type ImportResult,
} from './import-types.ts';
import { normalizeRows, type ParsedRow } from './normalize.ts';
import { parseNumberCell } from './numbers.ts';

export type { ImportOptions, ImportResult, DetectedFormat, ColumnRole } from './import-types.ts';
export { DEFAULT_K_TOLERANCE, DEFAULT_MAX_BYTES, LARGE_GAP_FACTOR } from './import-types.ts';

/** Lines looked at to guess the separator. */
const DIALECT_SAMPLE_LINES = 20;
/** Wavelength columns without a unit are read as nm only when every value lies in this range. */
const BARE_WAVELENGTH_NM_RANGE: [number, number] = [100, 100_000];

export function parseNkTable(input: string | Uint8Array, options: ImportOptions = {}): ImportResult {
  const file = options.file;
  const kTolerance = options.kTolerance ?? DEFAULT_K_TOLERANCE;
  if (!(kTolerance >= 0))
    throw new InputError('bad-option', `k tolerance ${kTolerance} must be a number ≥ 0`, {}, 400, {
      option: 'k_tolerance',
      value: String(kTolerance),
    });
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
    throw new InputError('bad-option', 'decimal commas need a separator other than a comma', { file }, 400, {
      option: 'decimal_comma',
      value: 'true',
    });
  }
  const rows = splitFields(lines, delimiter, file);
  const decimalComma = options.decimalComma ?? detectDecimalComma(rows.slice(header ? 1 : 0), delimiter);
  const headerLine = header ? lines[0].line : undefined;
  if (header && delimiter === WHITESPACE) rows[0] = splitWhitespaceHeader(lines[0].text, rows[0], rows[1]);

  if (!header && options.columns === undefined) {
    throw new InputError(
      'no-header',
      'the first line is data, not a header: name the columns (and the unit of x)',
      { file, line: lines[0].line },
      400,
      {
        remedies: [
          { option: 'columns', value: 'wavelength (nm),n,k' },
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

  const layout = columnLayout(names, { file, line: options.columns ? undefined : headerLine });
  const warnings = [...layout.warnings];
  const parsedRows: ParsedRow[] = [];
  for (let r = dataStart; r < rows.length; r++) {
    parsedRows.push(readRow(rows[r], lines[r].line, names.length, layout.roles, decimalComma, file));
  }
  if (parsedRows.length < 2) {
    throw new InputError('too-few-rows', 'only one data row; a table needs at least two', { file, line: parsedRows[0].line });
  }

  const unitsRow = unitsLine === undefined ? undefined : splitFields([unitsLine], delimiter, file)[0];
  const x = withUnitsRow(layout.x, unitsRow?.[layout.columnOf.x! - 1], { file, line: unitsLine?.line, column: layout.columnOf.x });
  const xUnit = options.xUnit ?? resolveXUnit(x, parsedRows, { file, line: unitsLine?.line ?? headerLine, column: layout.columnOf.x }, warnings);
  const quantity = layout.columnOf.eps1 !== undefined ? 'eps' : 'nk';
  if (!options.allowAnyRange) checkPlausibleRange(parsedRows, { file, xUnit, xKind: x.xKind, column: layout.columnOf.x });
  const normalized = normalizeRows(parsedRows, { file, xUnit, quantity, columnOf: layout.columnOf, kTolerance });
  for (const w of normalized.warnings) warnings.push(w);
  const hasK = layout.columnOf.k !== undefined || layout.columnOf.eps2 !== undefined;
  if (!hasK) warnings.push('no k column: k was not measured; it is stored as 0, and the KK check and fits treat it as absent');

  const detected: DetectedFormat = {
    encoding: decoded.encoding,
    bom: decoded.bom,
    lineEnding,
    delimiter: delimiter === WHITESPACE ? WHITESPACE : delimiter,
    decimalComma,
    header,
    ...(headerLine !== undefined && { headerLine }),
    preamble: located.preamble.map((l) => l.text),
    ...(unitsRow !== undefined && { unitsRow }),
    columns: names,
    roles: layout.roles,
    xUnit,
    quantity,
    hasK,
    hasSigma: normalized.table.sigmaN !== undefined || normalized.table.sigmaK !== undefined,
    dataLines: [parsedRows[0].line, parsedRows[parsedRows.length - 1].line],
    rows: parsedRows.length,
  };
  return { table: normalized.table, detected, warnings };
}

/**
 * A whitespace-separated header whose names hold spaces ("Photon energy (eV)   n   k"): when splitting at
 * every space gives more names than the first data row has fields, split at runs of two or more spaces (or
 * tabs), else group the words into known column names from the left.
 */
function splitWhitespaceHeader(text: string, words: string[], firstRow: string[] | undefined): string[] {
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
  return groupKnownNames(glued, width) ?? glued;
}

/** Split words into `count` consecutive groups that are each a known column name, if there is such a split. */
function groupKnownNames(words: string[], count: number): string[] | undefined {
  if (count === 1) {
    const name = words.join(' ');
    return recognizeColumn(name).role !== undefined ? [name] : undefined;
  }
  for (let take = 1; take <= words.length - count + 1; take++) {
    const name = words.slice(0, take).join(' ');
    if (recognizeColumn(name).role === undefined) continue;
    const rest = groupKnownNames(words.slice(take), count - 1);
    if (rest) return [name, ...rest];
  }
  return undefined;
}

/** The x column's unit from the units row when the header gives none; a contradiction is refused. */
function withUnitsRow(x: RecognizedColumn, cell: string | undefined, where: { file?: string; line?: number; column?: number }): RecognizedColumn {
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

interface ColumnLayout {
  roles: ColumnRole[];
  columnOf: Partial<Record<ColumnRole, number>>;
  x: RecognizedColumn;
  warnings: string[];
}

/** Assign a role to every column and check the set makes a table: one x, n or ε1+ε2, no role twice. */
function columnLayout(names: string[], where: { file?: string; line?: number }): ColumnLayout {
  const roles: ColumnRole[] = [];
  const columnOf: Partial<Record<ColumnRole, number>> = {};
  const warnings: string[] = [];
  let x: RecognizedColumn | undefined;
  names.forEach((name, i) => {
    const rec = recognizeColumn(name);
    const column = i + 1;
    let role = rec.role;
    if (role === undefined) {
      warnings.push(`column ${column} "${name}" is not a known quantity; ignored`);
      role = 'ignore';
    } else if (role === 'x' && x !== undefined) {
      warnings.push(`column ${column} "${name}" is a second x column; the first one (column ${columnOf.x}) is used`);
      role = 'ignore';
    } else if (role !== 'ignore' && columnOf[role] !== undefined) {
      throw new InputError('duplicate-column', `column "${name}" holds ${role}, which column ${columnOf[role]} already holds`, { ...where, column });
    }
    if (role === 'x') x = rec;
    if (role !== 'ignore') columnOf[role] = column;
    roles.push(role);
  });
  if (x === undefined) {
    throw new InputError(
      'no-x-column',
      `no wavelength, energy or wavenumber column among ${names.map((n) => `"${n}"`).join(', ')}. Accepted names (any case) are ${ACCEPTED_NAMES_SUMMARY}. ` +
        'Name the columns in order yourself, or say which line is the header',
      where,
      400,
      {
        remedies: [
          { option: 'columns', value: 'wavelength (nm),n,k' },
          { option: 'header_line', value: 'N' },
        ],
      },
    );
  }
  const hasNk = columnOf.n !== undefined || columnOf.k !== undefined;
  const hasEps = columnOf.eps1 !== undefined || columnOf.eps2 !== undefined;
  if (hasNk && hasEps) throw new InputError('mixed-columns', 'the table has both n,k and ε1,ε2 columns; keep one pair', where);
  if (hasEps && (columnOf.eps1 === undefined || columnOf.eps2 === undefined)) {
    throw new InputError('no-value-column', 'ε input needs both an ε1 (eps1, e1) and an ε2 (eps2, e2) column', where);
  }
  if (!hasEps && columnOf.n === undefined) throw new InputError('no-value-column', 'no n column (nor ε1/ε2 columns)', where);
  return { roles, columnOf, x, warnings };
}

function readRow(cells: string[], line: number, expected: number, roles: ColumnRole[], decimalComma: boolean, file?: string): ParsedRow {
  // A trailing separator ("1,2,3,") leaves one empty extra field: tolerated.
  const fields = cells.length === expected + 1 && cells[expected] === '' ? cells.slice(0, expected) : cells;
  if (fields.length !== expected) {
    throw new InputError('field-count', `${fields.length} field(s) where the header has ${expected}`, {
      file,
      line,
      column: Math.min(fields.length, expected) + 1,
    });
  }
  const values: ParsedRow['values'] = {};
  roles.forEach((role, i) => {
    if (role !== 'ignore') values[role] = parseNumberCell(fields[i], decimalComma, { file, line, column: i + 1 });
  });
  return { line, values };
}

/** Unit of the x column from the header; energy and wavenumber imply eV and cm⁻¹; a bare wavelength is nm if plausible. */
function resolveXUnit(
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
    400,
    { remedies: [{ option: 'input_unit', value: guess?.unit ?? 'um' }] },
  );
}
