/**
 * Goodness-of-fit tests on the residuals of a converged fit. Pure functions; fit.ts turns their results into
 * warnings.
 * - χ² survival probability Q(ν/2, χ²/2), the regularized upper incomplete gamma function: the probability
 *   that a correct model with correct sigmas gives a χ² this large with ν degrees of freedom (the χ²
 *   distribution; W. H. Press et al., Numerical Recipes, 3rd ed., §6.2 and §15.1; series and
 *   Lentz continued fraction as given there).
 * - Wald–Wolfowitz runs test on the signs of the residuals in spectral order (A. Wald and J. Wolfowitz,
 *   Ann. Math. Stat. 11, 147 (1940)): a model that describes the data leaves signs that change at
 *   random; too few runs means the residuals follow a structure the model misses.
 * - Breusch–Pagan test in Koenker's studentized form (T. S. Breusch and A. R. Pagan, Econometrica 47, 1287
 *   (1979); R. Koenker, J. Econometrics 17, 107 (1981)): regress the squared residuals on the
 *   magnitude of the fitted value; N·R² follows χ² with 1 degree of freedom when the noise does not grow
 *   with the value.
 */

/** ln Γ(x) for x > 0 (Lanczos approximation, g = 7, n = 9 coefficients; common practice). */
function logGamma(x: number): number {
  const c = [
    0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059, 12.507343278686905, -0.13857109526572012,
    9.9843695780195716e-6, 1.5056327351493116e-7,
  ];
  if (x < 0.5) return Math.log(Math.PI / Math.sin(Math.PI * x)) - logGamma(1 - x);
  const z = x - 1;
  let a = c[0];
  const t = z + 7.5;
  for (let i = 1; i < 9; i++) a += c[i] / (z + i);
  return 0.5 * Math.log(2 * Math.PI) + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

/** Regularized upper incomplete gamma Q(a, x) = Γ(a, x)/Γ(a) (Numerical Recipes §6.2). */
export function gammaQ(a: number, x: number): number {
  if (!(x > 0)) return 1;
  const lead = -x + a * Math.log(x) - logGamma(a);
  if (x < a + 1) {
    // series for P(a, x)
    let sum = 1 / a;
    let term = sum;
    for (let n = 1; n < 10000; n++) {
      term *= x / (a + n);
      sum += term;
      if (Math.abs(term) < Math.abs(sum) * 1e-15) break;
    }
    return Math.max(0, 1 - sum * Math.exp(lead));
  }
  // continued fraction for Q(a, x), modified Lentz
  const tiny = 1e-300;
  let b = x + 1 - a;
  let c = 1 / tiny;
  let d = 1 / b;
  let h = d;
  for (let i = 1; i < 10000; i++) {
    const an = -i * (i - a);
    b += 2;
    d = an * d + b;
    if (Math.abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (Math.abs(c) < tiny) c = tiny;
    d = 1 / d;
    const delta = d * c;
    h *= delta;
    if (Math.abs(delta - 1) < 1e-15) break;
  }
  return Math.exp(lead) * h;
}

/** P(χ²_ν ≥ chi2): the survival function of the χ² distribution with ν degrees of freedom. */
export function chi2Survival(chi2: number, dof: number): number {
  return gammaQ(dof / 2, chi2 / 2);
}

/** Two-sided standard normal tail probability P(|Z| ≥ |z|) = erfc(|z|/√2) = Q(1/2, z²/2). */
export function normalTwoSided(z: number): number {
  return gammaQ(0.5, (z * z) / 2);
}

export interface RunsTest {
  runs: number;
  expected: number;
  /** (runs − expected)/σ: strongly negative when the residuals come in long same-sign stretches. */
  z: number;
  /** One-sided probability of this few runs or fewer under random signs (normal approximation). */
  p: number;
}

/**
 * Wald–Wolfowitz runs test on the signs of `r` (zeros skipped); null when either sign has fewer than
 * RUNS_MIN_SIGNS members, below which the normal approximation of the run count is poor (common practice).
 */
export const RUNS_MIN_SIGNS = 10;
export function runsTest(r: ArrayLike<number>): RunsTest | null {
  let plus = 0;
  let minus = 0;
  let runs = 0;
  let last = 0;
  for (let i = 0; i < r.length; i++) {
    const s = Math.sign(r[i]);
    if (s === 0) continue;
    if (s > 0) plus++;
    else minus++;
    if (s !== last) runs++;
    last = s;
  }
  const n = plus + minus;
  if (plus < RUNS_MIN_SIGNS || minus < RUNS_MIN_SIGNS) return null;
  const expected = (2 * plus * minus) / n + 1;
  const variance = (2 * plus * minus * (2 * plus * minus - n)) / (n * n * (n - 1));
  const z = (runs - expected) / Math.sqrt(variance);
  return { runs, expected, z, p: z < 0 ? normalTwoSided(z) / 2 : 1 - normalTwoSided(z) / 2 };
}

export interface HeteroscedasticityTest {
  /** Koenker's statistic N·R² of r² regressed on |fitted value|. */
  statistic: number;
  /** χ²(1) survival probability of the statistic. */
  p: number;
  /** Sign of the slope: positive when the scatter grows with the value. */
  slope: number;
}

/** Breusch–Pagan (Koenker) test of r² against |value|; null when the values do not vary. */
export function breuschPagan(r: ArrayLike<number>, value: ArrayLike<number>): HeteroscedasticityTest | null {
  const n = r.length;
  if (n < 5) return null;
  let mx = 0;
  let my = 0;
  for (let i = 0; i < n; i++) {
    mx += Math.abs(value[i]);
    my += r[i] * r[i];
  }
  mx /= n;
  my /= n;
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  for (let i = 0; i < n; i++) {
    const dx = Math.abs(value[i]) - mx;
    const dy = r[i] * r[i] - my;
    sxx += dx * dx;
    sxy += dx * dy;
    syy += dy * dy;
  }
  if (!(sxx > 1e-30 * n) || !(syy > 0)) return null;
  const r2 = (sxy * sxy) / (sxx * syy);
  const statistic = n * r2;
  return { statistic, p: chi2Survival(statistic, 1), slope: sxy / sxx };
}
