/**
 * The CIE tables of data/cie/ (CIE 1931 2° colour-matching functions and illuminant D65 at 1 nm; citation in
 * data/cie/README.md), read once and sampled on the colour grid of src/stack/colour.ts (380–780 nm at 5 nm:
 * the 1 nm tables hold the 5 nm values at multiples of 5 nm).
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { COLOUR_GRID_NM, type CieTables } from '../stack/colour.ts';

const CIE_DIR = fileURLToPath(new URL('../../data/cie/', import.meta.url));

let cached: CieTables | null = null;

/** Columns of a CIE CSV by wavelength (first column, nm). */
function readColumns(file: string): Map<number, number[]> {
  const rows = new Map<number, number[]>();
  const lines = readFileSync(CIE_DIR + file, 'utf8')
    .split(/\r?\n/)
    .slice(1);
  for (const line of lines) {
    if (line.trim() === '') continue;
    const [w, ...values] = line.split(',').map(Number);
    rows.set(w, values);
  }
  return rows;
}

export function cieTables(): CieTables {
  if (cached) return cached;
  const cmf = readColumns('cie1931-2deg-cmf-1nm.csv');
  const d65 = readColumns('cie-d65-spd-1nm.csv');
  const pick = (table: Map<number, number[]>, column: number, file: string) =>
    COLOUR_GRID_NM.map((w) => {
      const value = table.get(w)?.[column];
      if (value === undefined || !Number.isFinite(value)) throw new Error(`data/cie/${file} has no value at ${w} nm`);
      return value;
    });
  cached = {
    xbar: pick(cmf, 0, 'cie1931-2deg-cmf-1nm.csv'),
    ybar: pick(cmf, 1, 'cie1931-2deg-cmf-1nm.csv'),
    zbar: pick(cmf, 2, 'cie1931-2deg-cmf-1nm.csv'),
    d65: pick(d65, 0, 'cie-d65-spd-1nm.csv'),
  };
  return cached;
}
