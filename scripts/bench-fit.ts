/**
 * Fit benchmark: nkledger's fitter against scipy.optimize.least_squares(method='lm') on the same data and
 * the same start, in one run. Run: npx tsx scripts/bench-fit.ts   (needs python3 with numpy and scipy).
 * Cases: Tauc-Lorentz on 2×200 and 2×2000 points (n and k), 3-term Sellmeier on 2000 points (n only).
 * Prints the median time per fit, the final χ² of each side and the time ratio.
 */
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';
import { fitTable } from '../src/fit/fit.ts';
import type { FitOptions } from '../src/fit/types.ts';
import { buildModel } from '../src/models/catalogue.ts';
import type { NkTable } from '../src/table.ts';

const REPEATS = 30;
const WARMUP = 5;

/** Gaussian deviates from a seeded generator (mulberry32 + Box-Muller), so both sides see identical data. */
function gaussian(seed: number): () => number {
  let a = seed >>> 0;
  const uniform = () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return (((t ^ (t >>> 14)) >>> 0) + 0.5) / 4294967296;
  };
  return () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
}

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
  return s[s.length >> 1];
}

const ours = cases.map((c) => {
  for (let i = 0; i < WARMUP; i++) fitTable(c.table, c.options);
  const times: number[] = [];
  let report = fitTable(c.table, c.options);
  for (let i = 0; i < REPEATS; i++) {
    const t0 = performance.now();
    report = fitTable(c.table, c.options);
    times.push(performance.now() - t0);
  }
  const free = report.correlations.parameters.length;
  return { ms: median(times), chi2: (report.statistics.reduced_chi2 as number) * (report.statistics.points - free), iterations: report.statistics.iterations };
});

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
  repeats: REPEATS,
}));
const script = fileURLToPath(new URL('./bench_fit_scipy.py', import.meta.url));
const py = spawnSync('python3', [script], { input: JSON.stringify(input), encoding: 'utf8', maxBuffer: 1 << 26 });
if (py.status !== 0) {
  process.stderr.write(`python side failed: ${py.stderr}\n`);
  process.exit(1);
}
const theirs = JSON.parse(py.stdout) as { scipy: string; numpy: string; results: { name: string; ms: number; chi2: number; nfev: number }[] };

const rows = cases.map((c, i) => {
  const s = theirs.results[i];
  const o = ours[i];
  return `| ${c.name} | ${o.ms.toFixed(2)} | ${s.ms.toFixed(2)} | ${(o.ms / s.ms).toFixed(2)} | ${o.chi2.toPrecision(8)} | ${s.chi2.toPrecision(8)} | ${o.iterations} / ${s.nfev} |`;
});
process.stdout.write(
  [
    `nkledger fitter vs scipy ${theirs.scipy} least_squares(method='lm'), numpy ${theirs.numpy}; median of ${REPEATS} fits, Node ${process.version}`,
    '',
    '| case | nkledger ms | scipy ms | ratio | nkledger χ² | scipy χ² | LM iterations / scipy evaluations |',
    '| --- | ---: | ---: | ---: | ---: | ---: | ---: |',
    ...rows,
    '',
  ].join('\n'),
);
