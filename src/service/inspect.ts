/** What `inspect` reports about an imported table or a stored version's table: plain JSON, shared by the CLI and the HTTP API. */
import type { ImportResult } from '../io/parse-table.ts';
import { tableRangeNm, type NkTable } from '../table.ts';
import type { TableOrigin } from './table-source.ts';

export interface InspectReport {
  /** "file" (a file or standard input) or "registry" (a stored version). */
  source: 'file' | 'registry';
  /** The stored version a registry reference resolved to (absent for files). */
  version?: { ref: string; sha256: string; status: string; model: string | null };
  points: number;
  range_nm: [number, number];
  /** Unit of the x column in the file. */
  x_unit: string;
  /** Column names as in the file's header (or as given by --columns). */
  columns: string[];
  /** What each column was read as: x, n, k, eps1, eps2, sigma_n, sigma_k, sigma_eps1, sigma_eps2 or ignore. */
  roles: string[];
  has_k: boolean;
  has_sigma: boolean;
  /** "nk" or "eps" (ε1, ε2 converted to n, k). */
  quantity: string;
  n_range: [number, number];
  k_range: [number, number];
  /** How the file was written; null for a stored version (stored tables are normalized). */
  dialect: {
    delimiter: string;
    decimal_comma: boolean;
    header: boolean;
    encoding: string;
    bom: boolean;
    line_ending: string;
    header_line?: number;
    units_row?: string[];
  } | null;
  /** The lines above the header (a file's metadata, kept in the provenance on import); empty for a stored version. */
  preamble: string[];
  /** 1-based lines of the first and last data row of the file; null for a stored version. */
  data_lines: [number, number] | null;
  warnings: string[];
}

function minMax(values: number[]): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values) {
    lo = Math.min(lo, v);
    hi = Math.max(hi, v);
  }
  return [lo, hi];
}

/** The report of a table and where it came from (a file's import detection, or a stored version). */
export function inspectReport(result: { table: NkTable; detected: TableOrigin | ImportResult['detected']; warnings: string[] }): InspectReport {
  const { table, detected: d } = result;
  const stored = 'source' in d && d.source === 'registry' ? d : null;
  const f = d as ImportResult['detected'];
  const columns = stored ? ['wavelength_nm', 'n', 'k', ...(table.sigmaN ? ['sigma_n'] : []), ...(table.sigmaK ? ['sigma_k'] : [])] : f.columns;
  return {
    source: stored ? 'registry' : 'file',
    ...(stored ? { version: { ref: stored.ref, sha256: stored.sha256, status: stored.status, model: stored.model } } : {}),
    points: table.wavelengthNm.length,
    range_nm: tableRangeNm(table),
    // A stored table is normalized: wavelength in nm, n, k and the sigmas it was imported with.
    x_unit: stored ? 'nm' : f.xUnit,
    columns,
    roles: stored ? ['x', ...columns.slice(1)] : f.roles,
    has_k: stored ? true : f.hasK,
    has_sigma: stored ? table.sigmaN !== undefined || table.sigmaK !== undefined : f.hasSigma,
    quantity: stored ? 'nk' : f.quantity,
    n_range: minMax(table.n),
    k_range: minMax(table.k),
    dialect: stored
      ? null
      : {
          delimiter: f.delimiter,
          decimal_comma: f.decimalComma,
          header: f.header,
          encoding: f.encoding,
          bom: f.bom,
          line_ending: f.lineEnding,
          ...(f.headerLine !== undefined && { header_line: f.headerLine }),
          ...(f.unitsRow !== undefined && { units_row: f.unitsRow }),
        },
    preamble: stored ? [] : f.preamble,
    data_lines: stored ? null : f.dataLines,
    warnings: result.warnings,
  };
}
