/**
 * The plausible range of an optical-constants table (PLAUSIBLE_RANGE_NM, 10 nm – 1 mm) and a guess of the
 * unit numbers look like when they fall outside it: µm values under a "Wavelength (nm)" header, nm values
 * read as eV, and so on. Pure.
 */
import { InputError } from '../errors.ts';
import { SPECTRAL_UNITS, toWavelengthNm, type SpectralUnit } from '../optics/units.ts';
import type { XKind } from './columns.ts';
import { PLAUSIBLE_RANGE_NM } from './import-types.ts';
import type { ParsedRow } from './normalize.ts';

/** Where most optical-constants tables lie (UV to mid-infrared, 100 nm – 100 µm): the first guess of a unit. */
const TYPICAL_RANGE_NM: [number, number] = [100, 100_000];

const UNIT_LABEL: Record<SpectralUnit, string> = { nm: 'nm', um: 'µm', A: 'Å', eV: 'eV', 'cm-1': 'cm⁻¹' };

/** Units tried first for each kind of x column, so "Wavelength" numbers are guessed as a wavelength unit. */
const UNITS_OF_KIND: Record<XKind, SpectralUnit[]> = { wavelength: ['nm', 'um', 'A'], energy: ['eV'], wavenumber: ['cm-1'] };

function inRange(lo: number, hi: number, unit: SpectralUnit, [min, max]: [number, number]): boolean {
  const a = toWavelengthNm(lo, unit);
  const b = toWavelengthNm(hi, unit);
  return Math.min(a, b) >= min && Math.max(a, b) <= max;
}

/**
 * The unit values lo…hi most likely are in, other than `declared`: units of the column's kind first, then
 * the others; the typical range first, then the plausible one. Undefined when no unit makes them plausible.
 */
export function unitGuess(
  lo: number,
  hi: number,
  kind: XKind | undefined,
  declared: SpectralUnit | undefined,
): { unit: SpectralUnit; label: string } | undefined {
  if (!(lo > 0)) return undefined;
  const order = [...(kind ? UNITS_OF_KIND[kind] : []), ...SPECTRAL_UNITS].filter((u, i, all) => u !== declared && all.indexOf(u) === i);
  for (const range of [TYPICAL_RANGE_NM, PLAUSIBLE_RANGE_NM]) {
    const unit = order.find((u) => inRange(lo, hi, u, range));
    if (unit) return { unit, label: UNIT_LABEL[unit] };
  }
  return undefined;
}

const nmText = (nm: number) =>
  nm >= 1e5 ? `${+(nm / 1e6).toPrecision(3)} mm` : nm >= 1e4 ? `${+(nm / 1e3).toPrecision(3)} µm` : `${+nm.toPrecision(3)} nm`;

/**
 * Refuse (rule `implausible-range`) when any positive x value, converted to nm, lies outside
 * PLAUSIBLE_RANGE_NM; the refusal names the first such row and the unit the numbers look like.
 * Non-positive x values are left to normalizeRows (`x-not-positive`).
 */
export function checkPlausibleRange(rows: ParsedRow[], ctx: { file?: string; xUnit: SpectralUnit; xKind?: XKind; column?: number }): void {
  const [min, max] = PLAUSIBLE_RANGE_NM;
  const xs = rows.map((r) => r.values.x as number).filter((x) => x > 0);
  const outside = rows.find((r) => {
    const x = r.values.x as number;
    if (!(x > 0)) return false;
    const nm = toWavelengthNm(x, ctx.xUnit);
    return Number.isFinite(nm) && (nm < min || nm > max);
  });
  if (!outside) return;
  const lo = Math.min(...xs);
  const hi = Math.max(...xs);
  const a = toWavelengthNm(lo, ctx.xUnit);
  const b = toWavelengthNm(hi, ctx.xUnit);
  const guess = unitGuess(lo, hi, ctx.xKind, ctx.xUnit);
  const unit = UNIT_LABEL[ctx.xUnit];
  throw new InputError(
    'implausible-range',
    `x values ${lo}–${hi} read as ${unit} are ${nmText(Math.min(a, b))} – ${nmText(Math.max(a, b))}, outside the range an optical-constants table plausibly covers ` +
      `(${nmText(min)} – ${nmText(max)})${guess ? `; ${lo}–${hi} looks like ${guess.label}` : ''}`,
    { file: ctx.file, line: outside.line, column: ctx.column },
    { remedies: [...(guess ? [{ option: 'input_unit', value: guess.unit }] : []), { option: 'allow_any_range' }] },
  );
}
