/**
 * Import of ellipsometric Ψ/Δ spectra from delimited text, through the same pipeline as n,k tables
 * (io/delimited.ts: encodings, separators, decimal commas, preamble, header detection, units row, strict
 * numbers; refusals with file, line, column and rule). Two layouts:
 *
 *   long   wavelength (or photon energy …), angle, Ψ, Δ [, σΨ, σΔ]   one row per wavelength and angle
 *   wide   wavelength, psi_65, delta_65, psi_70, delta_70, …        one Ψ/Δ pair of columns per angle
 *
 * Angles, Ψ and Δ are in degrees. Δ may be written in 0…360 or −180…180 (both seen in exports); it is kept in
 * [0, 360), the convention of the stack engine (Azzam & Bashara). Plausibility: 0 ≤ angle < 90, 0 ≤ Ψ ≤ 90,
 * −180 ≤ Δ ≤ 360, σ > 0, x within the plausible range of n,k import. Pure.
 */
import { InputError } from '../errors.ts';
import { toWavelengthNm, type SpectralUnit } from '../optics/units.ts';
import { type RecognizedColumn, recognizeColumn } from './columns.ts';
import { type DelimitedText, readDelimited, readRows, resolveXUnit, unitsRowOf, WHITESPACE, withUnitsRow } from './delimited.ts';
import type { DetectedFormat, ImportOptions } from './import-types.ts';
import type { ParsedRow } from './normalize.ts';
import { checkPlausibleRange } from './plausible.ts';

export type PsiDeltaOptions = Pick<
  ImportOptions,
  'file' | 'xUnit' | 'columns' | 'delimiter' | 'decimalComma' | 'maxBytes' | 'headerLine' | 'allowAnyRange'
>;

/** Measured points sorted by angle, then wavelength; Δ in [0, 360). */
export interface PsiDeltaData {
  wavelengthNm: number[];
  angleDeg: number[];
  psiDeg: number[];
  deltaDeg: number[];
  /** 1σ of Ψ and Δ per point (degrees), when the file gives them. */
  sigmaPsiDeg: number[] | null;
  sigmaDeltaDeg: number[] | null;
  /** Line of the file each point came from. */
  line: number[];
}

/** How the file was read: the n,k import's detection fields, and the layout, angles and Δ convention. */
export interface PsiDeltaFormat
  extends Pick<DetectedFormat, 'bom' | 'lineEnding' | 'delimiter' | 'decimalComma' | 'header' | 'headerLine' | 'preamble' | 'columns' | 'xUnit'> {
  encoding: string;
  /** Role per column: x, angle, psi, delta, sigma_psi, sigma_delta (wide: psi@65 …), ignore. */
  roles: string[];
  layout: 'long' | 'wide';
  /** How Δ was written: "0-360", "-180-180", or "either" when every value lies in 0…180. */
  deltaConvention: '0-360' | '-180-180' | 'either';
  anglesDeg: number[];
  points: number;
  hasSigma: boolean;
}

export interface PsiDeltaImport {
  data: PsiDeltaData;
  detected: PsiDeltaFormat;
  warnings: string[];
}

type Quantity = 'angle' | 'psi' | 'delta' | 'sigma_psi' | 'sigma_delta';

const NAMES: Record<string, Quantity> = {
  angle: 'angle',
  aoi: 'angle',
  angleofincidence: 'angle',
  incidenceangle: 'angle',
  theta: 'angle',
  θ: 'angle',
  psi: 'psi',
  ψ: 'psi',
  delta: 'delta',
  δ: 'delta',
  sigmapsi: 'sigma_psi',
  σψ: 'sigma_psi',
  σpsi: 'sigma_psi',
  dpsi: 'sigma_psi',
  errpsi: 'sigma_psi',
  psierr: 'sigma_psi',
  sigmadelta: 'sigma_delta',
  σδ: 'sigma_delta',
  σdelta: 'sigma_delta',
  ddelta: 'sigma_delta',
  errdelta: 'sigma_delta',
  deltaerr: 'sigma_delta',
};

/** Accepted names, for messages and docs/ellipsometry.md (keep the two equal). */
export const PSI_DELTA_NAMES_SUMMARY =
  'x: any wavelength or photon-energy name of n,k import (wavelength_nm, Wavelength (nm), energy (eV) …); angle: angle, angle_deg, Angle (deg), AOI, angle of incidence, theta, θ; ' +
  'Ψ: psi, psi_deg, Ψ; Δ: delta, delta_deg, Δ; 1σ: sigma_psi, σΨ, dpsi, err_psi, psi_err; sigma_delta, σΔ, ddelta, err_delta, delta_err; ' +
  'wide layout: psi_65, delta_65 (and sigma_psi_65, sigma_delta_65) per angle';

const DEGREE_UNITS = new Set(['deg', 'degree', 'degrees', '°', 'grad°']);

/** "Angle (deg)", "psi_deg", "Ψ [°]", "delta_65" → base key and unit text. */
function splitDegrees(raw: string): { key: string; unit?: string } {
  const name = raw.normalize('NFC').trim();
  let base = name;
  let unit: string | undefined;
  const bracketed = /^(.*?)\s*[([]\s*([^)\]]*?)\s*[)\]]\s*$/.exec(name);
  if (bracketed && bracketed[1] !== '') [base, unit] = [bracketed[1], bracketed[2]];
  else {
    const suffixed = /^(.*?)(?:\s+|_|\s*\/\s*)(deg|degrees?|°|rad|radians?)$/i.exec(name);
    if (suffixed && suffixed[1] !== '') [base, unit] = [suffixed[1], suffixed[2]];
  }
  const key = base
    .toLowerCase()
    .replace(/°$/, '')
    .replace(/[\s_.-]+/g, '');
  return { key, unit: unit?.toLowerCase() };
}

interface PsiColumn {
  role: string;
  quantity?: Quantity;
  angle?: number;
  x?: RecognizedColumn;
  unit?: string;
}

export function recognizePsiDeltaColumn(raw: string): PsiColumn {
  const x = recognizeColumn(raw);
  if (x.role === 'x') return { role: 'x', x };
  if (x.role === 'ignore') return { role: 'ignore' };
  const { key, unit } = splitDegrees(raw);
  const quantity = NAMES[key];
  if (quantity) return { role: quantity, quantity, unit };
  const wide = /^(sigmapsi|σψ|dpsi|sigmadelta|σδ|ddelta|psi|ψ|delta|δ)@?(\d+(?:\.\d+)?)(?:deg|°)?$/.exec(key);
  if (wide) {
    const q = NAMES[wide[1]];
    const angle = Number(wide[2]);
    return { role: `${q}@${angle}`, quantity: q, angle, unit };
  }
  return { role: 'ignore' };
}

const isKnown = (name: string) => recognizePsiDeltaColumn(name).role !== 'ignore' || name.trim() === '-';

export function parsePsiDelta(input: string | Uint8Array, options: PsiDeltaOptions = {}): PsiDeltaImport {
  const file = options.file;
  const text = readDelimited(input, options, isKnown, 'wavelength (nm),angle,psi,delta');
  const where = { file, line: options.columns ? undefined : text.headerLine };
  const warnings: string[] = [];
  const columns = text.names.map((name, i) => {
    const c = recognizePsiDeltaColumn(name);
    if (c.unit !== undefined && !DEGREE_UNITS.has(c.unit)) {
      throw new InputError('unknown-unit', `column "${name}": angles, Ψ and Δ are read in degrees, not "${c.unit}"`, { ...where, column: i + 1 });
    }
    if (c.role === 'ignore' && name.trim() !== '-') warnings.push(`column ${i + 1} "${name}" is not a known quantity; ignored`);
    return c;
  });
  const layout = layoutOf(columns, text.names, where, warnings);
  const roles = columns.map((c) => c.role);
  const rows = readRows(text, roles, file);

  const unitsRow = unitsRowOf(text, file);
  const xColumn = layout.columnOf.x!;
  const x = withUnitsRow(columns[xColumn - 1].x!, unitsRow?.[xColumn - 1], { file, line: text.unitsLine?.line, column: xColumn });
  const xUnit = options.xUnit ?? resolveXUnit(x, rows, { file, line: text.unitsLine?.line ?? text.headerLine, column: xColumn }, warnings);
  if (!options.allowAnyRange) checkPlausibleRange(rows, { file, xUnit, xKind: x.xKind, column: xColumn });

  const points = layout.wide ? wideRows(rows, layout) : longRows(rows, layout);
  const data = checkAndSort(points, { file, xUnit, xColumn }, warnings);
  const deltaConvention = conventionOf(points, file);
  return {
    data,
    detected: detectedOf(text, columns, layout.wide ? 'wide' : 'long', xUnit, deltaConvention, data),
    warnings,
  };
}

interface Layout {
  wide: boolean;
  columnOf: Partial<Record<string, number>>;
  /** Wide layout: per angle, the 1-based columns of Ψ, Δ and their σ. */
  angles: Array<{ angle: number; psi: number; delta: number; sigmaPsi?: number; sigmaDelta?: number }>;
}

function layoutOf(columns: PsiColumn[], names: string[], where: { file?: string; line?: number }, warnings: string[]): Layout {
  const columnOf: Partial<Record<string, number>> = {};
  columns.forEach((c, i) => {
    if (c.role === 'ignore') return;
    if (c.role === 'x' && columnOf.x !== undefined) {
      warnings.push(`column ${i + 1} "${names[i]}" is a second x column; the first one (column ${columnOf.x}) is used`);
      c.role = 'ignore';
      return;
    }
    if (columnOf[c.role] !== undefined) {
      throw new InputError('duplicate-column', `column "${names[i]}" holds ${c.role}, which column ${columnOf[c.role]} already holds`, {
        ...where,
        column: i + 1,
      });
    }
    columnOf[c.role] = i + 1;
  });
  if (columnOf.x === undefined) {
    throw new InputError(
      'no-x-column',
      `no wavelength or photon-energy column among ${names.map((n) => `"${n}"`).join(', ')}. Accepted names (any case) are ${PSI_DELTA_NAMES_SUMMARY}`,
      where,
      { remedies: [{ option: 'columns', value: 'wavelength (nm),angle,psi,delta' }] },
    );
  }
  const wideColumns = columns.filter((c) => c.angle !== undefined);
  const longColumns = columns.filter((c) => c.quantity !== undefined && c.angle === undefined);
  if (wideColumns.length && longColumns.length) {
    throw new InputError(
      'mixed-layout',
      `the header mixes the long layout (${longColumns.map((c) => c.role).join(', ')}) and the wide one (${wideColumns.map((c) => c.role).join(', ')}); use one`,
      where,
    );
  }
  if (!wideColumns.length) {
    const missing = ['angle', 'psi', 'delta'].filter((q) => columnOf[q] === undefined);
    if (missing.length) {
      throw new InputError(
        'no-value-column',
        `no ${missing.join(', ')} column among ${names.map((n) => `"${n}"`).join(', ')}: a Ψ/Δ file has wavelength, angle, psi, delta columns (or psi_65, delta_65, … per angle). Accepted names are ${PSI_DELTA_NAMES_SUMMARY}`,
        where,
      );
    }
    return { wide: false, columnOf, angles: [] };
  }
  const byAngle = new Map<number, Layout['angles'][number]>();
  for (const c of wideColumns) {
    const entry = byAngle.get(c.angle!) ?? { angle: c.angle!, psi: 0, delta: 0 };
    const column = columnOf[c.role]!;
    if (c.quantity === 'psi') entry.psi = column;
    else if (c.quantity === 'delta') entry.delta = column;
    else if (c.quantity === 'sigma_psi') entry.sigmaPsi = column;
    else entry.sigmaDelta = column;
    byAngle.set(c.angle!, entry);
  }
  const angles = [...byAngle.values()].sort((a, b) => a.angle - b.angle);
  for (const a of angles) {
    if (!a.psi || !a.delta) {
      throw new InputError(
        'no-value-column',
        `angle ${a.angle}°: the wide layout needs both psi_${a.angle} and delta_${a.angle}; ${a.psi ? 'Δ' : 'Ψ'} is missing`,
        { ...where, column: a.psi || a.delta || a.sigmaPsi || a.sigmaDelta },
      );
    }
  }
  return { wide: true, columnOf, angles };
}

interface Point {
  line: number;
  x: number;
  angle: number;
  psi: number;
  delta: number;
  sigmaPsi?: number;
  sigmaDelta?: number;
  /** 1-based columns of angle, Ψ, Δ, σΨ, σΔ, for messages. */
  at: { angle?: number; psi: number; delta: number; sigmaPsi?: number; sigmaDelta?: number };
}

function longRows(rows: ParsedRow[], layout: Layout): Point[] {
  const c = layout.columnOf;
  return rows.map((r) => {
    const v = r.values as Record<string, number>;
    return {
      line: r.line,
      x: v.x,
      angle: v.angle,
      psi: v.psi,
      delta: v.delta,
      sigmaPsi: v.sigma_psi,
      sigmaDelta: v.sigma_delta,
      at: { angle: c.angle, psi: c.psi!, delta: c.delta!, sigmaPsi: c.sigma_psi, sigmaDelta: c.sigma_delta },
    };
  });
}

function wideRows(rows: ParsedRow[], layout: Layout): Point[] {
  return rows.flatMap((r) => {
    const v = r.values as Record<string, number>;
    return layout.angles.map((a) => ({
      line: r.line,
      x: v.x,
      angle: a.angle,
      psi: v[`psi@${a.angle}`],
      delta: v[`delta@${a.angle}`],
      sigmaPsi: a.sigmaPsi === undefined ? undefined : v[`sigma_psi@${a.angle}`],
      sigmaDelta: a.sigmaDelta === undefined ? undefined : v[`sigma_delta@${a.angle}`],
      at: { psi: a.psi, delta: a.delta, sigmaPsi: a.sigmaPsi, sigmaDelta: a.sigmaDelta },
    }));
  });
}

/** Plausibility of every point, Δ into [0, 360), duplicates refused, sorted by angle then wavelength. */
function checkAndSort(points: Point[], ctx: { file?: string; xUnit: SpectralUnit; xColumn: number }, warnings: string[]): PsiDeltaData {
  const file = ctx.file;
  const seen = new Map<string, number>();
  const sorted = points.map((p) => {
    const at = (column: number | undefined) => ({ file, line: p.line, column });
    if (!(p.x > 0)) throw new InputError('x-not-positive', `x value ${p.x} is not positive`, at(ctx.xColumn));
    if (!(p.angle >= 0 && p.angle < 90)) {
      throw new InputError(
        'implausible-angle',
        `angle of incidence ${p.angle}° is outside 0 ≤ angle < 90° (angles are read in degrees)`,
        at(p.at.angle),
      );
    }
    if (!(p.psi >= 0 && p.psi <= 90)) throw new InputError('implausible-psi', `Ψ = ${p.psi}° is outside 0–90° (Ψ is read in degrees)`, at(p.at.psi));
    if (!(p.delta >= -180 && p.delta <= 360)) {
      throw new InputError('implausible-delta', `Δ = ${p.delta}° is outside −180…360° (Δ is read in degrees, in 0…360 or −180…180)`, at(p.at.delta));
    }
    for (const [value, column, what] of [
      [p.sigmaPsi, p.at.sigmaPsi, 'σΨ'],
      [p.sigmaDelta, p.at.sigmaDelta, 'σΔ'],
    ] as const) {
      if (value !== undefined && !(value > 0))
        throw new InputError('sigma-not-positive', `${what} = ${value}: a 1σ uncertainty must be > 0`, at(column));
    }
    const wavelengthNm = toWavelengthNm(p.x, ctx.xUnit);
    const key = `${wavelengthNm}@${p.angle}`;
    const before = seen.get(key);
    if (before !== undefined) {
      throw new InputError('duplicate-point', `wavelength ${p.x} at angle ${p.angle}° is given twice (first on line ${before})`, at(ctx.xColumn));
    }
    seen.set(key, p.line);
    const delta = p.delta < 0 ? p.delta + 360 : p.delta === 360 ? 0 : p.delta;
    return { ...p, wavelengthNm, delta };
  });
  sorted.sort((a, b) => a.angle - b.angle || a.wavelengthNm - b.wavelengthNm);
  const hasSigmaPsi = sorted.some((p) => p.sigmaPsi !== undefined);
  const hasSigmaDelta = sorted.some((p) => p.sigmaDelta !== undefined);
  const perAngle = new Map<number, number>();
  for (const p of sorted) perAngle.set(p.angle, (perAngle.get(p.angle) ?? 0) + 1);
  for (const [angle, count] of perAngle) if (count < 2) warnings.push(`angle ${angle}° has a single wavelength`);
  return {
    wavelengthNm: sorted.map((p) => p.wavelengthNm),
    angleDeg: sorted.map((p) => p.angle),
    psiDeg: sorted.map((p) => p.psi),
    deltaDeg: sorted.map((p) => p.delta),
    sigmaPsiDeg: hasSigmaPsi ? sorted.map((p) => p.sigmaPsi ?? Number.NaN) : null,
    sigmaDeltaDeg: hasSigmaDelta ? sorted.map((p) => p.sigmaDelta ?? Number.NaN) : null,
    line: sorted.map((p) => p.line),
  };
}

/** Δ written in 0…360 or −180…180; a file with values of both (below 0 and above 180) is refused. */
function conventionOf(points: Point[], file: string | undefined): PsiDeltaFormat['deltaConvention'] {
  const negative = points.find((p) => p.delta < 0);
  const above = points.find((p) => p.delta > 180);
  if (negative && above) {
    const later = negative.line > above.line ? negative : above;
    throw new InputError(
      'delta-range',
      `Δ values run from ${negative.delta}° to ${above.delta}°: neither 0…360 nor −180…180 (first mixed value here)`,
      { file, line: later.line, column: later.at.delta },
    );
  }
  return negative ? '-180-180' : above ? '0-360' : 'either';
}

function detectedOf(
  text: DelimitedText,
  columns: PsiColumn[],
  layout: 'long' | 'wide',
  xUnit: SpectralUnit,
  deltaConvention: PsiDeltaFormat['deltaConvention'],
  data: PsiDeltaData,
): PsiDeltaFormat {
  return {
    encoding: text.decoded.encoding,
    bom: text.decoded.bom,
    lineEnding: text.lineEnding,
    delimiter: text.delimiter === WHITESPACE ? WHITESPACE : text.delimiter,
    decimalComma: text.decimalComma,
    header: text.header,
    ...(text.headerLine !== undefined && { headerLine: text.headerLine }),
    preamble: text.located.preamble.map((l) => l.text),
    columns: text.names,
    roles: columns.map((c) => c.role),
    layout,
    xUnit,
    deltaConvention,
    anglesDeg: [...new Set(data.angleDeg)],
    points: data.wavelengthNm.length,
    hasSigma: data.sigmaPsiDeg !== null || data.sigmaDeltaDeg !== null,
  };
}
