/**
 * Effective-medium mixtures of two materials: complex permittivities in, complex permittivity out.
 *
 * Sign convention: ε = ε1 + iε2 = (n + ik)² with the registry's k ≥ 0, so a passive (absorbing) medium has
 * Im ε ≥ 0 (src/optics/permittivity.ts). The stack engine later forms N = n − ik for its e^{+iωt} fields
 * (src/stack/transfer-matrix.ts); mixing is done before that, on ε of n + ik, and the result goes back to
 * n, k ≥ 0 through nkFromEps. Both rules are for spherical inclusions in three dimensions (depolarisation 1/3).
 *
 * Source for both formulas: D. E. Aspnes, "Optical properties of thin films", Thin Solid Films 89, 249 (1982),
 * eqs. for the Maxwell Garnett and Bruggeman (effective-medium) approximations.
 */

export interface Complex {
  re: number;
  im: number;
}

export const EMA_RULES = ['bruggeman', 'maxwell-garnett'] as const;
export type EmaRule = (typeof EMA_RULES)[number];

const add = (a: Complex, b: Complex): Complex => ({ re: a.re + b.re, im: a.im + b.im });
const sub = (a: Complex, b: Complex): Complex => ({ re: a.re - b.re, im: a.im - b.im });
const mul = (a: Complex, b: Complex): Complex => ({ re: a.re * b.re - a.im * b.im, im: a.re * b.im + a.im * b.re });
const scale = (a: Complex, s: number): Complex => ({ re: a.re * s, im: a.im * s });
function div(a: Complex, b: Complex): Complex {
  const d = b.re * b.re + b.im * b.im;
  return { re: (a.re * b.re + a.im * b.im) / d, im: (a.im * b.re - a.re * b.im) / d };
}
/**
 * Maxwell Garnett: inclusions of permittivity `inclusion` at volume fraction f in `host` (Aspnes 1982):
 *   (ε − εh)/(ε + 2εh) = f (εi − εh)/(εi + 2εh)
 *   ⇒ ε = εh [εi + 2εh + 2f(εi − εh)] / [εi + 2εh − f(εi − εh)].
 */
export function maxwellGarnett(host: Complex, inclusion: Complex, f: number): Complex {
  const d = sub(inclusion, host);
  const base = add(inclusion, scale(host, 2));
  return mul(host, div(add(base, scale(d, 2 * f)), sub(base, scale(d, f))));
}

/**
 * Bruggeman, two phases, material 2 at volume fraction f in material 1 (Aspnes 1982):
 *   (1 − f)(ε1 − ε)/(ε1 + 2ε) + f (ε2 − ε)/(ε2 + 2ε) = 0
 * is the quadratic 2ε² − bε − ε1ε2 = 0 with b = (2 − 3f)ε1 + (3f − 1)ε2, whose roots are
 *   ε = [b ± √(b² + 8ε1ε2)] / 4.
 * The physical root is the one with Im ε ≥ 0 (a mixture of passive media is passive); this takes the root of
 * larger Im ε, and when both roots are real within rounding (lossless inputs: then one root is negative)
 * the one of larger Re ε. At f = 0 the roots are ε1 and −ε2/2, at f = 1 ε2 and −ε1/2,
 * so the rule gives the pure material at both ends.
 */
export function bruggeman(eps1: Complex, eps2: Complex, f: number): Complex {
  const out = new Float64Array(2);
  bruggemanInto(eps1.re, eps1.im, eps2.re, eps2.im, f, out);
  return { re: out[0], im: out[1] };
}

/** bruggeman() on plain numbers, the result (re, im) written into `out`: no allocation, for whole spectra. */
export function bruggemanInto(aRe: number, aIm: number, bRe: number, bIm: number, f: number, out: Float64Array): void {
  // b = (2 − 3f)ε1 + (3f − 1)ε2; root = √(b² + 8ε1ε2)
  const wa = 2 - 3 * f,
    wb = 3 * f - 1;
  const sRe = wa * aRe + wb * bRe,
    sIm = wa * aIm + wb * bIm;
  const zRe = sRe * sRe - sIm * sIm + 8 * (aRe * bRe - aIm * bIm),
    zIm = 2 * sRe * sIm + 8 * (aRe * bIm + aIm * bRe);
  // principal √ (Re ≥ 0) written without cancellation (Numerical Recipes §5.4)
  const m = Math.sqrt(zRe * zRe + zIm * zIm);
  let rRe = 0,
    rIm = 0;
  if (m !== 0) {
    if (zRe >= 0) {
      rRe = Math.sqrt((m + zRe) / 2);
      rIm = zIm / (2 * rRe);
    } else {
      rIm = Math.sqrt((m - zRe) / 2) * (zIm < 0 ? -1 : 1);
      rRe = zIm / (2 * rIm);
    }
  }
  const pRe = 0.25 * (sRe + rRe),
    pIm = 0.25 * (sIm + rIm);
  const mRe = 0.25 * (sRe - rRe),
    mIm = 0.25 * (sIm - rIm);
  const size = Math.sqrt(Math.max(pRe * pRe + pIm * pIm, mRe * mRe + mIm * mIm));
  const plus = Math.abs(pIm - mIm) <= 1e-12 * size ? pRe >= mRe : pIm > mIm;
  out[0] = plus ? pRe : mRe;
  out[1] = plus ? pIm : mIm;
}

/** The mixture of two permittivities by `rule`, the second at volume fraction f (for Maxwell Garnett the first is the host). */
export function mixPermittivity(rule: EmaRule, first: Complex, second: Complex, f: number): Complex {
  return rule === 'bruggeman' ? bruggeman(first, second, f) : maxwellGarnett(first, second, f);
}
