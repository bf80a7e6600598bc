/**
 * Conversions between the spectral coordinates used for optical constants.
 * Internally wavelengths are in nm; models defined in energy use eV.
 *
 * hc/e = 1239.841984 eV·nm follows from the exact SI values of h, c and e (CODATA 2018).
 */

/** hc/e in eV·nm (CODATA 2018: h = 6.62607015e-34 J·s, c = 299792458 m/s, e = 1.602176634e-19 C). */
export const HC_EV_NM = 1239.841984;

/** Spectral units a table's x column or a user flag may carry. */
export type SpectralUnit = 'nm' | 'um' | 'A' | 'eV' | 'cm-1';

export const SPECTRAL_UNITS: readonly SpectralUnit[] = ['nm', 'um', 'A', 'eV', 'cm-1'];

export function photonEnergyEvFromWavelengthNm(wavelengthNm: number): number {
  return HC_EV_NM / wavelengthNm;
}

export function wavelengthNmFromPhotonEnergyEv(energyEv: number): number {
  return HC_EV_NM / energyEv;
}

/** Wavenumber in cm⁻¹ from wavelength in nm: ν̃ = 1/λ = 1e7 / λ[nm]. */
export function wavenumberCm1FromWavelengthNm(wavelengthNm: number): number {
  return 1e7 / wavelengthNm;
}

export function wavelengthNmFromWavenumberCm1(wavenumberCm1: number): number {
  return 1e7 / wavenumberCm1;
}

/** Convert a spectral coordinate in `unit` to wavelength in nm. */
export function toWavelengthNm(value: number, unit: SpectralUnit): number {
  switch (unit) {
    case 'nm':
      return value;
    case 'um':
      return value * 1e3;
    case 'A':
      return value / 10;
    case 'eV':
      return wavelengthNmFromPhotonEnergyEv(value);
    case 'cm-1':
      return wavelengthNmFromWavenumberCm1(value);
  }
}

/** Convert a wavelength in nm to a spectral coordinate in `unit`. */
export function fromWavelengthNm(wavelengthNm: number, unit: SpectralUnit): number {
  switch (unit) {
    case 'nm':
      return wavelengthNm;
    case 'um':
      return wavelengthNm / 1e3;
    case 'A':
      return wavelengthNm * 10;
    case 'eV':
      return photonEnergyEvFromWavelengthNm(wavelengthNm);
    case 'cm-1':
      return wavenumberCm1FromWavelengthNm(wavelengthNm);
  }
}

/**
 * Parse a unit as users write it: "nm", "µm"/"um"/"micron", "Å"/"A"/"angstrom", "eV", "cm-1"/"cm^-1"/"1/cm".
 * Returns undefined when the text names no known unit.
 */
export function parseSpectralUnit(text: string): SpectralUnit | undefined {
  // NFKC folds the Ångström sign (U+212B) into Å and the micro sign into Greek μ; superscripts into digits
  // and U+2212 minus, so "cm⁻¹" becomes "cm−1" and then "cm-1".
  const t = text
    .normalize('NFKC')
    .trim()
    .replace(/\s+/g, '')
    .replace(/μ/g, 'µ')
    .replace(/\u2212/g, '-');
  const lower = t.toLowerCase();
  if (lower === 'nm' || lower === 'nanometer' || lower === 'nanometers') return 'nm';
  if (lower === 'µm' || lower === 'um' || lower === 'micron' || lower === 'microns' || lower === 'micrometer' || lower === 'micrometers') return 'um';
  if (t === 'Å' || t === 'A' || lower === 'angstrom' || lower === 'angstroms') return 'A';
  if (lower === 'ev') return 'eV';
  if (['cm-1', 'cm^-1', '1/cm', 'cm^(-1)', '/cm'].includes(lower)) return 'cm-1';
  return undefined;
}

/** Absorption coefficient α = 4πk/λ, returned in cm⁻¹ for λ in nm (common practice). */
export function absorptionCoefficientCm1(k: number, wavelengthNm: number): number {
  return (4 * Math.PI * k) / (wavelengthNm * 1e-7);
}
