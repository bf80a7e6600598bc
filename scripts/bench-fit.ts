/**
 * Fit benchmark: nkledger's fitter against scipy.optimize.least_squares(method='lm') on the same data and
 * the same start, in one run. Run: npx tsx scripts/bench-fit.ts   (needs python3 with numpy and scipy).
 * Cases: Tauc-Lorentz on 2×200 and 2×2000 points (n and k), 3-term Sellmeier on 2000 points (n only).
 * The two sides are timed in alternating rounds (python runs as a child process answering one request per
 * line), so load from other jobs hits both alike. Prints what each timing includes, the median time per fit
 * (nkledger: the fit alone, comparable with scipy's least_squares call, and the whole fitTable() call with
 * set-up and report), the final χ² of each side, the time ratios and the evaluation counts.
 */
import { spawn } from 'node:child_process';
import { createInterface } from 'node:readline';
import { fileURLToPath } from 'node:url';
import { fitTable, prepareFit, reportFit, solveFit } from '../src/fit/fit.ts';
import type { FitOptions } from '../src/fit/types.ts';
import { buildModel } from '../src/models/catalogue.ts';
import { seededNormal } from '../src/fit/random.ts';
import type { NkTable } from '../src/table.ts';

/** Rounds alternate between the two sides (a round = REPEATS_PER_ROUND fits of one case), so load from other jobs on a shared machine hits both alike. */
const ROUNDS = 10;
const REPEATS_PER_ROUND = 5;
/** Untimed fits per side and case before the first round (JIT / import warm-up). */
const WARMUP = 5;

/** Gaussian deviates from a seeded generator, so both sides see identical data. */
const gaussian = seededNormal;

interface Case {
  name: string;
  kind: 'tauc-lorentz' | 'sellmeier3';
  options: FitOptions;
  table: NkTable;
  start: Record<string, number>;
  fixed: Record<string, number>;
  fitK: boolean;
}

function makeCase(name: string, kind: Case['kind'], points: number, seed: number): Case {
  const tl = kind === 'tauc-lorentz';
  const [lo, hi] = tl ? [250, 1600] : [210, 3710];
  const wavelengthNm = Array.from({ length: points }, (_, i) => lo + ((hi - lo) * i) / (points - 1));
  const truth: Record<string, number> = tl
    ? { A: 122, E0: 3.45, C: 2.54, Eg: 1.2, eps_inf: 1.15 }
    : { A: 1, B1: 0.6961663, C1: 0.0684043 ** 2, B2: 0.4079426, C2: 0.1162414 ** 2, B3: 0.8974794, C3: 9.896161 ** 2 };
  const model = buildModel(tl ? 'tauc-lorentz' : 'sellmeier', { terms: tl ? 1 : 3 });
  const exact = model.nk(wavelengthNm, truth);
  const noise = gaussian(seed);
  const [sn, sk] = tl ? [1e-3, 5e-4] : [1e-5, 1e-5];
  const table: NkTable = {
    wavelengthNm,
    n: exact.n.map((v) => v + sn * noise()),
    k: tl ? exact.k.map((v) => v + sk * noise()) : exact.k,
    sigmaN: wavelengthNm.map(() => sn),
    sigmaK: wavelengthNm.map(() => sk),
  };
  const start: Record<string, number> = tl
    ? { A: 100, E0: 3.6, C: 2.2, Eg: 1.3, eps_inf: 1.4 }
    : { B1: 0.6, C1: 0.004, B2: 0.5, C2: 0.015, B3: 0.8, C3: 90 };
  const fixed: Record<string, number> = tl ? {} : { A: 1 };
  const options: FitOptions = { model: tl ? 'tauc-lorentz' : 'sellmeier', terms: tl ? 1 : 3, init: start, fix: fixed, target: tl ? 'nk' : 'n' };
  return { name, kind, options, table, start, fixed, fitK: tl };
}

const cases = [
  makeCase('Tauc-Lorentz, 2×200 points', 'tauc-lorentz', 200, 101),
  makeCase('Tauc-Lorentz, 2×2000 points', 'tauc-lorentz', 2000, 102),
  makeCase('Sellmeier 3 terms, 2000 points', 'sellmeier3', 2000, 103),
];

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 === 1 ? s[m] : (s[m - 1] + s[m]) / 2;
}

const input = cases.map((c) => ({
  name: c.name,
  kind: c.kind,
  wavelength_nm: c.table.wavelengthNm,
  n: c.table.n,
  k: c.table.k,
  sigma_n: c.table.sigmaN,
  sigma_k: c.table.sigmaK,
  fit_k: c.fitK,
  start: c.start,
  fixed: c.fixed,
}));

/** The scipy side as a line-oriented child process (scripts/bench_fit_scipy.py). */
const script = fileURLToPath(new URL('./bench_fit_scipy.py', import.meta.url));
const py = spawn('python3', [script], { stdio: ['pipe', 'pipe', 'inherit'] });
const lines = createInterface({ input: py.stdout })[Symbol.asyncIterator]();
async function ask(message: unknown): Promise<any> {
  py.stdin.write(`${JSON.stringify(message)}\n`);
  const next = await lines.next();
  if (next.done) throw new Error('the python side (scripts/bench_fit_scipy.py) ended early');
  return JSON.parse(next.value);
}

const theirs = (await ask(input)) as { scipy: string; numpy: string; results: { chi2: number; nfev: number; calls: number }[] };
for (let c = 0; c < cases.length; c++) await ask({ case: c, repeats: WARMUP });
/** Per case: the fit alone (solveFit), the report (reportFit), the whole call (prepareFit + solveFit + reportFit = fitTable). */
const ourTimes: number[][] = cases.map(() => []);
const reportTimes: number[][] = cases.map(() => []);
const wholeTimes: number[][] = cases.map(() => []);
const theirTimes: number[][] = cases.map(() => []);
const reports = cases.map((c) => {
  for (let i = 0; i < WARMUP; i++) fitTable(c.table, c.options);
  return fitTable(c.table, c.options);
});
for (let round = 0; round < ROUNDS; round++) {
  for (let c = 0; c < cases.length; c++) {
    for (let i = 0; i < REPEATS_PER_ROUND; i++) {
      const t0 = performance.now();
      const prepared = prepareFit(cases[c].table, cases[c].options);
      const t1 = performance.now();
      const solution = solveFit(prepared);
      const t2 = performance.now();
      reportFit(solution);
      const t3 = performance.now();
      ourTimes[c].push(t2 - t1);
      reportTimes[c].push(t3 - t2);
      wholeTimes[c].push(t3 - t0);
    }
    theirTimes[c].push(...((await ask({ case: c, repeats: REPEATS_PER_ROUND })) as { ms: number[] }).ms);
  }
}
py.stdin.end();

const rows = cases.map((c, i) => {
  const s = theirs.results[i];
  const report = reports[i];
  const free = report.correlations.parameters.length;
  const chi2 = (report.statistics.reduced_chi2 as number) * (report.statistics.points - free);
  const ours = median(ourTimes[i]);
  const whole = median(wholeTimes[i]);
  const scipyMs = median(theirTimes[i]);
  return `| ${c.name} | ${ours.toFixed(2)} | ${scipyMs.toFixed(2)} | ${(ours / scipyMs).toFixed(2)} | ${median(reportTimes[i]).toFixed(2)} | ${whole.toFixed(2)} | ${(whole / scipyMs).toFixed(2)} | ${chi2.toPrecision(8)} | ${s.chi2.toPrecision(8)} | ${report.statistics.iterations} | ${s.nfev} / ${s.calls} |`;
});
const fits = ROUNDS * REPEATS_PER_ROUND;
process.stdout.write(
  [
    `nkledger fitter vs scipy ${theirs.scipy} least_squares(method='lm'), numpy ${theirs.numpy}; Node ${process.version}`,
    `median time per fit over ${fits} fits per side and case, in ${ROUNDS} alternating rounds, after ${WARMUP} untimed warm-up fits per side and case.`,
    "fit ms: nkledger's minimization alone (solveFit: the Levenberg-Marquardt run from the given start), like for like",
    "  with scipy ms, one least_squares(f, x0, method='lm') call only. report ms: reportFit (standard errors,",
    '  correlation matrix, RMS, AIC/BIC, warnings). whole ms: one fitTable() call = problem set-up (rows, weights, grid,',
    '  start) + fit + report. Each column is its own median, so fit + report need not add up to whole.',
    'Same data, same start, same fixed values on both sides; χ² is the final weighted sum of squares.',
    'nkledger evaluations: trial points (one model pass each, values and analytic Jacobian together);',
    'scipy: nfev (its count; excludes the finite-difference Jacobian) / all residual-function calls.',
    '',
    '| case | nkledger fit ms | scipy ms | fit ratio | report ms | whole ms | whole ratio | nkledger χ² | scipy χ² | nkledger evaluations | scipy nfev / calls |',
    '| --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: |',
    ...rows,
    '',
  ].join('\n'),
);
