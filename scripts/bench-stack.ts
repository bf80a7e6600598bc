/**
 * Stack benchmark: nkledger's transfer-matrix engine against the numpy reference (scripts/stack_numpy.py,
 * vectorised over wavelengths) on 20 absorbing and dispersive layers × 1,000 wavelengths × 2 polarisations at
 * one angle. Run: npx tsx scripts/bench-stack.ts [--rounds 5]   (needs python3 with numpy).
 * The sides are timed in alternating rounds (python answers one request per line as a child process), so
 * load from other jobs hits both alike. Prints the median ms per angle of each side, their ratio per round
 * (goal ≤ 1), the CPU time per run of each process (steadier than wall time on a shared machine) and that both
 * give the same reflectances.
 */
import { spawn } from 'node:child_process';
import { createInterface } from 'node:readline';
import { fileURLToPath } from 'node:url';
import { solveStack, type StackProblem } from '../src/stack/transfer-matrix.ts';

const roundsArg = process.argv.indexOf('--rounds');
const ROUNDS = roundsArg > 0 ? Number(process.argv[roundsArg + 1]) : 5;
const REPEATS = 20;
const LAYERS = 20;
const POINTS = 1000;
const ANGLE = 45;

// Invented test stack: alternating dispersive high/low layers, every fifth one weakly absorbing, on an absorbing substrate.
const wavelengthNm = Array.from({ length: POINTS }, (_, i) => 400 + (800 * i) / (POINTS - 1));
const medium = (n: (um: number) => number, k: (um: number) => number) => ({
  n: wavelengthNm.map((w) => n(w / 1000)),
  k: wavelengthNm.map((w) => k(w / 1000)),
});
const layers = Array.from({ length: LAYERS }, (_, j) => ({
  ...medium(
    (um) => (j % 2 ? 1.46 + 0.004 / um ** 2 : 2.2 + 0.03 / um ** 2),
    (um) => (j % 5 === 4 ? 0.01 / um : 0),
  ),
  thicknessNm: j % 2 ? 95 + j : 60 + j,
}));
const problem: StackProblem = {
  wavelengthNm,
  ambient: medium(
    () => 1,
    () => 0,
  ),
  layers,
  substrate: medium(
    (um) => 3.9 + 0.1 / um,
    (um) => 0.02 / um,
  ),
};

function timeEngine(): { ms: number; cpu: number; check: number } {
  const times: number[] = [];
  let check = 0;
  const cpu0 = process.cpuUsage();
  for (let r = 0; r < REPEATS; r++) {
    const t0 = performance.now();
    const s = solveStack(problem, ANGLE);
    times.push(performance.now() - t0);
    check = s.Rs.reduce((a, b) => a + b, 0) + s.Rp.reduce((a, b) => a + b, 0);
  }
  const cpu = process.cpuUsage(cpu0);
  times.sort((a, b) => a - b);
  return { ms: times[Math.floor(times.length / 2)], cpu: (cpu.user + cpu.system) / 1000 / REPEATS, check };
}

const python = spawn('python3', [fileURLToPath(new URL('./bench_stack_numpy.py', import.meta.url))], { stdio: ['pipe', 'pipe', 'inherit'] });
const lines = createInterface({ input: python.stdout })[Symbol.asyncIterator]();
const ask = async (line: string) => {
  python.stdin.write(`${line}\n`);
  const answer = await lines.next();
  if (answer.done) throw new Error('the numpy side ended early');
  return JSON.parse(answer.value) as { ms: number; cpu: number; check: number };
};
python.stdin.write(
  `${JSON.stringify({ wavelength_nm: wavelengthNm, ambient: problem.ambient, layers: layers.map((l) => ({ n: l.n, k: l.k, thickness_nm: l.thicknessNm })), substrate: problem.substrate, angle_deg: ANGLE })}\n`,
);
const version = JSON.parse((await lines.next()).value as string).numpy as string;

// Warm-up (JIT, numpy import caches).
timeEngine();
await ask('5');
const rows: Array<{ ours: number; numpy: number; oursCpu: number; numpyCpu: number }> = [];
let checks: [number, number] = [0, 0];
for (let round = 0; round < ROUNDS; round++) {
  const ours = timeEngine();
  const theirs = await ask(String(REPEATS));
  rows.push({ ours: ours.ms, numpy: theirs.ms, oursCpu: ours.cpu, numpyCpu: theirs.cpu });
  checks = [ours.check, theirs.check];
}
python.stdin.end();

const median = (v: number[]) => [...v].sort((a, b) => a - b)[Math.floor(v.length / 2)];
const ratios = rows.map((r) => r.ours / r.numpy);
console.log(
  `${LAYERS} layers × ${POINTS} wavelengths × 2 polarisations at ${ANGLE}°, ${ROUNDS} rounds of ${REPEATS} runs per side; Node ${process.version}, numpy ${version}`,
);
console.log('');
const cpuRatios = rows.map((r) => r.oursCpu / r.numpyCpu);
const range = (v: number[]) => `${median(v).toFixed(2)} (${Math.min(...v).toFixed(2)}–${Math.max(...v).toFixed(2)})`;
console.log('| side | median wall ms per angle | CPU ms per angle | wall ratio to numpy (median, lowest–highest round) | CPU ratio |');
console.log('| --- | ---: | ---: | ---: | ---: |');
console.log(
  `| nkledger (src/stack) | ${median(rows.map((r) => r.ours)).toFixed(2)} | ${median(rows.map((r) => r.oursCpu)).toFixed(2)} | ${range(ratios)} | ${range(cpuRatios)} |`,
);
console.log(`| numpy reference | ${median(rows.map((r) => r.numpy)).toFixed(2)} | ${median(rows.map((r) => r.numpyCpu)).toFixed(2)} | 1.00 | 1.00 |`);
console.log('');
console.log(`same result: Σ(Rs + Rp) ${checks[0].toFixed(9)} (nkledger) vs ${checks[1].toFixed(9)} (numpy)`);
