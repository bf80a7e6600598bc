/**
 * Colour of reflected or transmitted light under CIE illuminant D65 for the CIE 1931 2° observer
 * (CIE 15:2004, "Colorimetry", §7): X = k Σ S(λ) R(λ) x̄(λ) Δλ (likewise Y, Z) with
 * k = 100 / Σ S(λ) ȳ(λ) Δλ, so a perfect reflector has Y = 100. Summed on 380–780 nm at 5 nm (common CIE
 * practice), whatever grid the spectra were asked on. CIELAB (CIE 15:2004 §8.2.1) against the white of the
 * same sums (a perfect reflector: L* = 100, a* = b* = 0); sRGB by IEC 61966-2-1 (matrix and transfer
 * function). Pure: the CIE tables are passed in (src/service/cie.ts reads them from data/cie/).
 */

/** The colour grid, nm: 380, 385, …, 780. */
export const COLOUR_GRID_NM: readonly number[] = Array.from({ length: 81 }, (_, i) => 380 + 5 * i);

/** CIE tables sampled on COLOUR_GRID_NM. */
export interface CieTables {
  xbar: number[];
  ybar: number[];
  zbar: number[];
  /** Relative spectral power of D65. */
  d65: number[];
}

export interface Colour {
  X: number;
  Y: number;
  Z: number;
  /** Chromaticity; null for black (X + Y + Z = 0). */
  x: number | null;
  y: number | null;
  L: number;
  a: number;
  b: number;
  /** sRGB of the colour, clipped into the gamut, as #rrggbb. */
  srgb_hex: string;
  /** Whether the linear sRGB components lie in [0, 1] (within 0.001) before clipping. */
  in_gamut: boolean;
}

/** IEC 61966-2-1 XYZ (D65, Y = 1 for white) → linear sRGB. */
const XYZ_TO_SRGB = [
  [3.2406, -1.5372, -0.4986],
  [-0.9689, 1.8758, 0.0415],
  [0.0557, -0.204, 1.057],
];
const GAMUT_SLACK = 1e-3;

/** XYZ of a spectrum (fractions 0–1 on COLOUR_GRID_NM) under D65. */
export function tristimulus(spectrum: ArrayLike<number>, cie: CieTables): { X: number; Y: number; Z: number } {
  if (spectrum.length !== COLOUR_GRID_NM.length)
    throw new RangeError(`a colour needs the spectrum on ${COLOUR_GRID_NM.length} wavelengths (380–780 nm at 5 nm)`);
  let X = 0,
    Y = 0,
    Z = 0,
    norm = 0;
  for (let i = 0; i < spectrum.length; i++) {
    const s = cie.d65[i];
    X += s * spectrum[i] * cie.xbar[i];
    Y += s * spectrum[i] * cie.ybar[i];
    Z += s * spectrum[i] * cie.zbar[i];
    norm += s * cie.ybar[i];
  }
  const k = 100 / norm;
  return { X: k * X, Y: k * Y, Z: k * Z };
}

/** CIE 15:2004 eq. 8.3: f(t) = t^{1/3} above (6/29)³, else t/(3·(6/29)²) + 4/29. */
function labF(t: number): number {
  const d = 6 / 29;
  return t > d * d * d ? Math.cbrt(t) : t / (3 * d * d) + 4 / 29;
}

/** sRGB transfer function (IEC 61966-2-1) of a linear component clipped to [0, 1]. */
function encode(linear: number): number {
  const v = Math.min(1, Math.max(0, linear));
  return v <= 0.0031308 ? 12.92 * v : 1.055 * v ** (1 / 2.4) - 0.055;
}

/** sRGB of XYZ (white Y = 100): the clipped #rrggbb and whether it was inside the gamut. */
export function srgbOf(X: number, Y: number, Z: number): { hex: string; inGamut: boolean } {
  const linear = XYZ_TO_SRGB.map((row) => (row[0] * X + row[1] * Y + row[2] * Z) / 100);
  const hex = linear
    .map((c) =>
      Math.round(encode(c) * 255)
        .toString(16)
        .padStart(2, '0'),
    )
    .join('');
  return { hex: `#${hex}`, inGamut: linear.every((c) => c >= -GAMUT_SLACK && c <= 1 + GAMUT_SLACK) };
}

/** Colour of a spectrum (fractions 0–1 on COLOUR_GRID_NM) seen under D65 by the 2° observer. */
export function colourOf(spectrum: ArrayLike<number>, cie: CieTables): Colour {
  const { X, Y, Z } = tristimulus(spectrum, cie);
  const white = tristimulus(new Array<number>(COLOUR_GRID_NM.length).fill(1), cie);
  const sum = X + Y + Z;
  const fx = labF(X / white.X),
    fy = labF(Y / white.Y),
    fz = labF(Z / white.Z);
  const srgb = srgbOf(X, Y, Z);
  return {
    X,
    Y,
    Z,
    x: sum > 0 ? X / sum : null,
    y: sum > 0 ? Y / sum : null,
    L: 116 * fy - 16,
    a: 500 * (fx - fy),
    b: 200 * (fy - fz),
    srgb_hex: srgb.hex,
    in_gamut: srgb.inGamut,
  };
}
