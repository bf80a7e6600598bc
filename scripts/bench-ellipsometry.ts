/**
 * Ellipsometry fit benchmark: the issue's case — 3 angles × 500 wavelengths, a Tauc-Lorentz film with thickness
 * under a Bruggeman roughness layer on a tabulated substrate (test/fixtures/ellipsometry/sinx-rough.*), from the
 * sample description's start — fitted by nkledger (one start, and the default 5 starts) and by scipy's
 * least_squares on the independent numpy model (scripts/bench_ellipsometry_scipy.py), in alternating rounds so
 * load from other jobs hits both alike. Prints a Markdown table: median wall and CPU ms (CPU time of the process, all its
 * threads: on a shared machine it leaves out the waiting for a core), the ratios to scipy per round, and both sides' χ²
 * and thickness. Run: npx tsx scripts/bench-ellipsometry.ts [--rounds 3]   (needs python3, numpy, scipy)
 */
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { fitEllipsometry, prepareEllipsometry } from '../src/service/ellipsometry.ts';

const roundsArg = process.argv.indexOf('--rounds');
const ROUNDS = roundsArg > 0 ? Number(process.argv[roundsArg + 1]) : 3;
const ROOT = fileURLToPath(new URL('../', import.meta.url));
const FIX = `${ROOT}test/fixtures/ellipsometry/`;

const prepared = await prepareEllipsometry({
  data: { bytes: readFileSync(`${FIX}sinx-rough.psi-delta.csv`), file: 'sinx-rough.psi-delta.csv' },
  sample: { text: readFileSync(`${FIX}sinx-rough.sample.json`, 'utf8'), file: `${FIX}sinx-rough.sample.json` },
  resolve: { allowFiles: true },
});
const time = (starts: number) => {
  const t = performance.now();
  const c = process.cpuUsage();
  const r = fitEllipsometry(prepared.sample, prepared.data.data, { starts, extrapolate: false });
  const cpu = process.cpuUsage(c);
  return {
    ms: performance.now() - t,
    cpuMs: (cpu.user + cpu.system) / 1000,
    chi2: r.statistics.chi2,
    thickness: r.parameters['film.thickness_nm'].value,
    iterations: r.statistics.iterations,
  };
};
time(1); // warm-up (JIT), not counted

const one: number[] = [];
const oneCpu: number[] = [];
const five: number[] = [];
const fiveCpu: number[] = [];
const scipy: number[] = [];
const scipyCpu: number[] = [];
let last = time(1);
let py = { ms: 0, cpu_ms: 0, nfev: 0, cost: 0, x: { d: 0 } };
for (let round = 0; round < ROUNDS; round++) {
  last = time(1);
  one.push(last.ms);
  oneCpu.push(last.cpuMs);
  const all = time(5);
  five.push(all.ms);
  fiveCpu.push(all.cpuMs);
  const out = spawnSync('python3', [`${ROOT}scripts/bench_ellipsometry_scipy.py`, '1'], { encoding: 'utf8' });
  if (out.status !== 0) throw new Error(`python3 failed: ${out.stderr}`);
  py = JSON.parse(out.stdout.trim());
  scipy.push(py.ms);
  scipyCpu.push(py.cpu_ms);
}
const median = (v: number[]) => [...v].sort((a, b) => a - b)[Math.floor(v.length / 2)];
const ratios = one.map((v, i) => v / scipy[i]);
const cpuRatios = oneCpu.map((v, i) => v / scipyCpu[i]);
const range = (r: number[]) => `${median(r).toFixed(2)} (${Math.min(...r).toFixed(2)}–${Math.max(...r).toFixed(2)})`;
console.log(`rounds: ${ROUNDS}, Node ${process.version}, load average ${(await import('node:os')).loadavg()[0].toFixed(1)}\n`);
console.log('| side | median ms | ratio to scipy (per round) | median CPU ms | CPU ratio to scipy (per round) | χ² | film thickness (nm) |');
console.log('| --- | ---: | ---: | ---: | ---: | ---: | ---: |');
console.log(
  `| nkledger, 1 start | ${median(one).toFixed(0)} | ${range(ratios)} | ${median(oneCpu).toFixed(0)} | ${range(cpuRatios)} | ${last.chi2.toFixed(3)} | ${last.thickness.toFixed(4)} |`,
);
console.log(`| nkledger, 5 starts | ${median(five).toFixed(0)} | | ${median(fiveCpu).toFixed(0)} | | | |`);
console.log(
  `| scipy least_squares (trf), 1 start | ${median(scipy).toFixed(0)} | 1.00 | ${median(scipyCpu).toFixed(0)} | 1.00 | ${py.cost.toFixed(3)} | ${py.x.d.toFixed(4)} |`,
);
