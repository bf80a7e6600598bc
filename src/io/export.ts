/**
 * Export of a normalized table as CSV (RFC 4180, header with units in the column names) or JSON (RFC 8259),
 * with the x coordinate in a chosen unit. Rows ascend in the chosen unit (so descend in wavelength for eV
 * and cm⁻¹). The column names are ones parseNkTable recognizes, so exports import back unchanged.
 */
import { fromWavelengthNm, type SpectralUnit } from '../optics/units.ts';
import type { NkTable } from '../table.ts';

export type ExportFormat = 'csv' | 'json';
export const EXPORT_FORMATS: readonly ExportFormat[] = ['csv', 'json'];

/** Name of the x column/key for a unit: wavelength_nm, wavelength_um, wavelength_A, energy_eV, wavenumber_cm-1. */
export function xColumnName(unit: SpectralUnit): string {
  if (unit === 'eV') return 'energy_eV';
  if (unit === 'cm-1') return 'wavenumber_cm-1';
  return `wavelength_${unit}`;
}

/** Columns of the export: the x column in `unit`, n, k and the sigmas when the table has them. */
export function exportColumns(table: NkTable, unit: SpectralUnit): Record<string, number[]> {
  const ascendingInWavelength = unit !== 'eV' && unit !== 'cm-1';
  const order = table.wavelengthNm.map((_, i) => i);
  if (!ascendingInWavelength) order.reverse();
  const pick = (values: number[]) => order.map((i) => values[i]);
  const columns: Record<string, number[]> = {
    [xColumnName(unit)]: pick(table.wavelengthNm.map((w) => fromWavelengthNm(w, unit))),
    n: pick(table.n),
    k: pick(table.k),
  };
  if (table.sigmaN) columns.sigma_n = pick(table.sigmaN);
  if (table.sigmaK) columns.sigma_k = pick(table.sigmaK);
  return columns;
}

export function exportTable(table: NkTable, format: ExportFormat, unit: SpectralUnit = 'nm'): string {
  const columns = exportColumns(table, unit);
  if (format === 'json') return `${JSON.stringify(columns, null, 2)}\n`;
  const names = Object.keys(columns);
  const rows = columns.n.map((_, i) => names.map((name) => String(columns[name][i])).join(','));
  return `${[names.join(','), ...rows].join('\r\n')}\r\n`;
}
