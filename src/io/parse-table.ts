/**
 * Import of tabulated optical constants from delimited text in the dialects instruments export:
 * comma, semicolon, tab or whitespace separated; decimal commas (when the separator is not a comma);
 * UTF-8 BOM; LF, CRLF or CR; `#` comment lines; blank lines; x in nm, µm, Å, eV or cm⁻¹; n,k or ε1,ε2;
 * optional 1σ columns. Explicit options always override detection. Anything doubtful is refused with
 * an InputError naming file, 1-based line, column and rule; nothing is half-accepted.
 * Pure: takes the content, never reads a file (see src/service/source.ts for that).
 */
import { InputError } from '../errors.ts';
import { ACCEPTED_NAMES_SUMMARY, type RecognizedColumn, recognizeColumn } from './columns.ts';
import { readDelimited, readRows, resolveXUnit, unitsRowOf, WHITESPACE, withUnitsRow } from './delimited.ts';
import { checkPlausibleRange } from './plausible.ts';
import { DEFAULT_K_TOLERANCE, type ColumnRole, type DetectedFormat, type ImportOptions, type ImportResult } from './import-types.ts';
import { normalizeRows } from './normalize.ts';

export type { ImportOptions, ImportResult, DetectedFormat, ColumnRole } from './import-types.ts';
export { DEFAULT_K_TOLERANCE, DEFAULT_MAX_BYTES, LARGE_GAP_FACTOR } from './import-types.ts';

export function parseNkTable(input: string | Uint8Array, options: ImportOptions = {}): ImportResult {
  const file = options.file;
  const kTolerance = options.kTolerance ?? DEFAULT_K_TOLERANCE;
  if (!(kTolerance >= 0))
    throw new InputError(
      'bad-option',
      `k tolerance ${kTolerance} must be a number ≥ 0`,
      {},
      {
        option: 'k_tolerance',
        value: String(kTolerance),
      },
    );
  const text = readDelimited(input, options, (name) => recognizeColumn(name).role !== undefined, 'wavelength (nm),n,k');
  const { decoded, lineEnding, located, delimiter, decimalComma, header, headerLine, unitsLine, names } = text;

  const layout = columnLayout(names, { file, line: options.columns ? undefined : headerLine });
  const warnings = [...layout.warnings];
  const parsedRows = readRows(text, layout.roles, file);

  const unitsRow = unitsRowOf(text, file);
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
