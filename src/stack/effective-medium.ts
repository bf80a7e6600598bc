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
/** Principal complex square root (Re ≥ 0), written without cancellation. */
function sqrt(a: Complex): Complex {
  const m = Math.hypot(a.re, a.im);
  if (m === 0) return { re: 0, im: 0 };
  if (a.re >= 0) {
    const re = Math.sqrt((m + a.re) / 2);
    return { re, im: a.im / (2 * re) };
  }
  const im = Math.sqrt((m - a.re) / 2) * (a.im < 0 ? -1 : 1);
  return { re: a.im / (2 * im), im };
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
  const b = add(scale(eps1, 2 - 3 * f), scale(eps2, 3 * f - 1));
  const root = sqrt(add(mul(b, b), scale(mul(eps1, eps2), 8)));
  const plus = scale(add(b, root), 0.25);
  const minus = scale(sub(b, root), 0.25);
  const size = Math.max(Math.hypot(plus.re, plus.im), Math.hypot(minus.re, minus.im));
  if (Math.abs(plus.im - minus.im) <= 1e-12 * size) return plus.re >= minus.re ? plus : minus;
  return plus.im > minus.im ? plus : minus;
}

/** The mixture of two permittivities by `rule`, the second at volume fraction f (for Maxwell Garnett the first is the host). */
export function mixPermittivity(rule: EmaRule, first: Complex, second: Complex, f: number): Complex {
  return rule === 'bruggeman' ? bruggeman(first, second, f) : maxwellGarnett(first, second, f);
}
