/** What `inspect` reports about an imported table: plain JSON, shared by the CLI and (later) the HTTP API. */
import type { ImportResult } from '../io/parse-table.ts';
import { tableRangeNm } from '../table.ts';

export interface InspectReport {
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
  dialect: { delimiter: string; decimal_comma: boolean; header: boolean; encoding: string; bom: boolean; line_ending: string };
  data_lines: [number, number];
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

export function inspectReport(result: ImportResult): InspectReport {
  const { table, detected: d } = result;
  return {
    points: table.wavelengthNm.length,
    range_nm: tableRangeNm(table),
    x_unit: d.xUnit,
    columns: d.columns,
    roles: d.roles,
    has_k: d.hasK,
    has_sigma: d.hasSigma,
    quantity: d.quantity,
    n_range: minMax(table.n),
    k_range: minMax(table.k),
    dialect: { delimiter: d.delimiter, decimal_comma: d.decimalComma, header: d.header, encoding: d.encoding, bom: d.bom, line_ending: d.lineEnding },
    data_lines: d.dataLines,
    warnings: result.warnings,
  };
}
