/**
 * Recognition of column names in table headers: the x column (wavelength, lambda, energy, photon
 * energy, wavenumber) with its unit in brackets or parentheses or after a space/underscore/slash, and
 * the value columns (n, k, ε1/ε2 in their usual spellings, 1σ uncertainties).
 */
import { parseSpectralUnit, type SpectralUnit } from '../optics/units.ts';
import type { ColumnRole } from './import-types.ts';

export type XKind = 'wavelength' | 'energy' | 'wavenumber';

export interface RecognizedColumn {
  role: ColumnRole | undefined;
  /** For the x column: what kind of spectral coordinate the name says. */
  xKind?: XKind;
  /** Unit text found in the name (may name no known unit). */
  unitText?: string;
  /** The unit, when the unit text is a known spectral unit. */
  unit?: SpectralUnit;
}

const X_NAMES: Record<string, XKind> = {
  wavelength: 'wavelength',
  wellenlaenge: 'wavelength',
  wellenlänge: 'wavelength',
  lambda: 'wavelength',
  λ: 'wavelength',
  wl: 'wavelength',
  wvl: 'wavelength',
  wavelen: 'wavelength',
  energy: 'energy',
  photonenergy: 'energy',
  e: 'energy',
  hv: 'energy',
  hν: 'energy',
  wavenumber: 'wavenumber',
  wn: 'wavenumber',
  nu: 'wavenumber',
  ν: 'wavenumber',
  ν̃: 'wavenumber',
};

/** A column named by its unit alone ("eV", "nm", "cm-1") is that kind of x column in that unit. */
const UNIT_KIND: Record<SpectralUnit, XKind> = { nm: 'wavelength', um: 'wavelength', A: 'wavelength', eV: 'energy', 'cm-1': 'wavenumber' };

/** Unit a coordinate kind implies when the header gives none (a photon energy is in eV, a wavenumber in cm⁻¹). */
export const IMPLIED_UNIT: Partial<Record<XKind, SpectralUnit>> = { energy: 'eV', wavenumber: 'cm-1' };

const VALUE_NAMES: Record<string, ColumnRole> = {
  n: 'n',
  k: 'k',
  kappa: 'k',
  κ: 'k',
  refractiveindex: 'n',
  refractiveindexn: 'n',
  nreal: 'n',
  extinctioncoefficient: 'k',
  extinctioncoefficientk: 'k',
  extinctioncoeff: 'k',
  extinction: 'k',
  kimag: 'k',
  eps1: 'eps1',
  e1: 'eps1',
  ε1: 'eps1',
  epsilon1: 'eps1',
  "ε'": 'eps1',
  "eps'": 'eps1',
  reeps: 'eps1',
  reε: 'eps1',
  reepsilon: 'eps1',
  epsr: 'eps1',
  eps2: 'eps2',
  e2: 'eps2',
  ε2: 'eps2',
  epsilon2: 'eps2',
  'ε"': 'eps2',
  'eps"': 'eps2',
  imeps: 'eps2',
  imε: 'eps2',
  imepsilon: 'eps2',
  epsi: 'eps2',
  sigman: 'sigma_n',
  σn: 'sigma_n',
  dn: 'sigma_n',
  errn: 'sigma_n',
  nerr: 'sigma_n',
  sigmak: 'sigma_k',
  σk: 'sigma_k',
  dk: 'sigma_k',
  errk: 'sigma_k',
  kerr: 'sigma_k',
  sigmaeps1: 'sigma_eps1',
  sigmae1: 'sigma_eps1',
  σε1: 'sigma_eps1',
  sigmaeps2: 'sigma_eps2',
  sigmae2: 'sigma_eps2',
  σε2: 'sigma_eps2',
  '-': 'ignore',
};

/** Split "Wavelength (nm)", "lambda[um]", "energy_eV", "E/eV" into a base name and unit text. */
export function splitNameAndUnit(raw: string): { base: string; unitText?: string } {
  const name = raw.normalize('NFC').trim();
  const bracketed = /^(.*?)\s*[([]\s*([^)\]]*?)\s*[)\]]\s*$/.exec(name);
  if (bracketed && bracketed[1] !== '') return { base: bracketed[1], unitText: bracketed[2] };
  const suffixed = /^(.*?)(?:\s+|_|\s*\/\s*|\s*,\s*)(nm|um|µm|μm|å|a|ev|cm-1|cm\^-1|cm⁻¹|1\/cm|micron|microns)$/i.exec(name);
  if (suffixed && suffixed[1] !== '') return { base: suffixed[1], unitText: suffixed[2] };
  return { base: name };
}

/** Key for the name tables: lower case without spaces, underscores, dots, hyphens or sub-/superscript styling. */
function key(base: string): string {
  return base
    .toLowerCase()
    .replace(/[\s_.-]+/g, '')
    .replace(/₁/g, '1')
    .replace(/₂/g, '2');
}

export function recognizeColumn(raw: string): RecognizedColumn {
  const { base, unitText } = splitNameAndUnit(raw);
  const asUnit = unitText === undefined ? parseSpectralUnit(base) : undefined;
  // A bare "A" is an ångström only as a unit; as a column name it is too likely something else.
  if (asUnit !== undefined && base.trim() !== 'A') return { role: 'x', xKind: UNIT_KIND[asUnit], unitText: base.trim(), unit: asUnit };
  const k = key(base);
  const xKind = X_NAMES[k];
  // A bare "e" is only an energy when it carries a unit ("E (eV)"); "e1"/"e2" are ε.
  if (xKind && !(k === 'e' && unitText === undefined)) {
    return { role: 'x', xKind, unitText, unit: unitText === undefined ? undefined : parseSpectralUnit(unitText) };
  }
  const value = VALUE_NAMES[k] ?? VALUE_NAMES[key(raw.replace(/[()[\]]/g, ''))];
  return { role: value };
}

/**
 * The header names accepted, for messages and docs/import.md (which lists them in full): names are
 * compared in lower case without spaces, underscores, dots and hyphens, with the unit in brackets,
 * parentheses or after a space, underscore or slash.
 */
export const ACCEPTED_NAMES_SUMMARY =
  'x: wavelength, lambda, λ, wl, wvl, energy, photon energy, E (eV), hv, wavenumber, wn, ν, or the unit alone (nm, µm, eV, cm-1); ' +
  'values: n, refractive index, k, kappa, extinction coefficient, eps1/eps2, e1/e2, ε1/ε2, Re(eps)/Im(eps), sigma_n, sigma_k, sigma_eps1, sigma_eps2; "-" skips a column';
