/**
 * Benchmark of the Kramers-Kronig check: wall time against the number of table rows.
 * Run: npx tsx scripts/bench-kk.ts   (prints a Markdown table and the fitted growth exponent)
 *
 * Input: the exact two-Lorentz pair of the tests (one oscillator inside, one above 300–1200 nm),
 * sampled at N evenly spaced wavelengths. Each size is run REPEATS times after one warm-up run; the
 * median is reported. Growth exponent: least-squares slope of log(time) against log(N).
 * Then the sharp case: 20,000 points over 1–5 eV of the exact Lorentz sum of scripts/make-kk-sharp-cases.py
 * with Γ = 0.03 eV peaks (goal ≤ 1.2 s on the development machine).
 * `npx tsx scripts/bench-kk.ts sharp` runs the sharp case only.
 * `npx tsx scripts/bench-kk.ts rounded` times 100,000 and 300,000 points of the two-Lorentz table exact and with n
 * and k rounded to 7 decimals, as measured tables are written (every rounding step is a small local maximum of
 * ε2): the time per point should not grow with N in either.
 */
import { checkKramersKronig } from '../src/kk/check.ts';
import { nkFromEps } from '../src/optics/permittivity.ts';
import { photonEnergyEvFromWavelengthNm } from '../src/optics/units.ts';
import type { NkTable } from '../src/table.ts';

const SIZES = [500, 1000, 2000, 5000, 10000, 20000];
const REPEATS = 3;
/** (A eV², E0 eV, Γ eV), ε∞ = 1.2: the parameters of test/fixtures/kk/lorentz-pair (scripts/gen-kk-cases.py). */
const OSCILLATORS: [number, number, number][] = [
  [6.0, 2.6, 0.5],
  [60.0, 7.0, 1.2],
];

/** A table of ε∞ + Σ A/(E0² − E² − iΓE) (an exact KK pair) at the given wavelengths. */
function lorentzSum(wavelengthNm: number[], epsInf: number, oscillators: [number, number, number][]): NkTable {
  const table: NkTable = { wavelengthNm, n: [], k: [] };
  for (const wl of wavelengthNm) {
    const e = photonEnergyEvFromWavelengthNm(wl);
    let eps1 = epsInf;
    let eps2 = 0;
    for (const [a, e0, gamma] of oscillators) {
      // A/(E0² − E² − iΓE) = A·(E0² − E² + iΓE)/((E0² − E²)² + Γ²E²)
      const re = e0 * e0 - e * e;
      const den = re * re + gamma * gamma * e * e;
      eps1 += (a * re) / den;
      eps2 += (a * gamma * e) / den;
    }
    const nk = nkFromEps(eps1, eps2);
    table.n.push(nk.n);
    table.k.push(nk.k);
  }
  return table;
}

function lorentzTable(points: number): NkTable {
  return lorentzSum(
    Array.from({ length: points }, (_, i) => 300 + (900 * i) / (points - 1)),
    1.2,
    OSCILLATORS,
  );
}

const median = (v: number[]) => [...v].sort((a, b) => a - b)[v.length >> 1];

/** The sharp-peak table: ε∞ 1.5 + (7.5Γ, 2.5, Γ) + (18.9Γ, 4.2, Γ) + (40, 8, 1.5), Γ = 0.03 eV, 1–5 eV evenly in energy. */
function sharpTable(points: number, gamma = 0.03): NkTable {
  const oscillators: [number, number, number][] = [
    [3 * gamma * 2.5, 2.5, gamma],
    [4.5 * gamma * 4.2, 4.2, gamma],
    [40, 8, 1.5],
  ];
  // evenly in energy from 5 eV down to 1 eV: ascending wavelength
  return lorentzSum(
    Array.from({ length: points }, (_, i) => 1239.841984 / (5 - (4 * i) / (points - 1))),
    1.5,
    oscillators,
  );
}

function sharpCase(): void {
  const table = sharpTable(20000);
  checkKramersKronig(sharpTable(667));
  const times: number[] = [];
  const cpu: number[] = [];
  let verdict = '';
  for (let r = 0; r < REPEATS; r++) {
    const start = performance.now();
    const used = process.cpuUsage();
    verdict = checkKramersKronig(table).verdict;
    times.push(performance.now() - start);
    const d = process.cpuUsage(used);
    cpu.push((d.user + d.system) / 1000);
  }
  // CPU time beside wall time: on a shared machine the wall time also counts waiting for a core
  console.log(
    `\nsharp peaks (Γ = 0.03 eV), 20000 points over 1–5 eV: median ${median(times).toFixed(1)} ms wall, ${median(cpu).toFixed(1)} ms CPU (goal ≤ 1200 ms), verdict ${verdict}`,
  );
}

/** The table with n and k rounded to `decimals` decimals. */
function rounded(table: NkTable, decimals: number): NkTable {
  const round = (v: number) => Math.round(v * 10 ** decimals) / 10 ** decimals;
  return { wavelengthNm: table.wavelengthNm, n: table.n.map(round), k: (table.k ?? []).map(round) };
}

function roundedCase(): void {
  console.log('| points | exact: median ms | µs per point | rounded to 7 decimals: median ms | µs per point |');
  console.log('| ---: | ---: | ---: | ---: | ---: |');
  for (const size of [100_000, 300_000]) {
    const exact = lorentzTable(size);
    const cells = [exact, rounded(exact, 7)].map((table) => {
      const times: number[] = [];
      for (let r = 0; r < REPEATS; r++) {
        const start = performance.now();
        checkKramersKronig(table);
        times.push(performance.now() - start);
      }
      return median(times);
    });
    console.log(`| ${size} | ${cells.map((ms) => `${ms.toFixed(0)} | ${((1000 * ms) / size).toFixed(1)}`).join(' | ')} |`);
  }
}

if (process.argv[2] === 'sharp') {
  sharpCase();
  process.exit(0);
}
if (process.argv[2] === 'rounded') {
  checkKramersKronig(lorentzTable(500));
  roundedCase();
  process.exit(0);
}
checkKramersKronig(lorentzTable(500));
const rows: [number, number, string][] = [];
for (const size of SIZES) {
  const table = lorentzTable(size);
  const times: number[] = [];
  let verdict = '';
  for (let r = 0; r < REPEATS; r++) {
    const start = performance.now();
    verdict = checkKramersKronig(table).verdict;
    times.push(performance.now() - start);
  }
  rows.push([size, median(times), verdict]);
}
const xs = rows.map((r) => Math.log(r[0]));
const ys = rows.map((r) => Math.log(r[1]));
const mx = xs.reduce((a, b) => a + b) / xs.length;
const my = ys.reduce((a, b) => a + b) / ys.length;
const slope = xs.reduce((s, x, i) => s + (x - mx) * (ys[i] - my), 0) / xs.reduce((s, x) => s + (x - mx) ** 2, 0);
console.log('| points | median time (ms) | verdict |');
console.log('| ---: | ---: | --- |');
for (const [size, ms, verdict] of rows) console.log(`| ${size} | ${ms.toFixed(1)} | ${verdict} |`);
console.log(`\ngrowth exponent (time ∝ N^p): p = ${slope.toFixed(2)}; node ${process.version}`);
sharpCase();
