/**
 * Benchmark of the Kramers-Kronig check: wall time against the number of table rows.
 * Run: npx tsx scripts/bench-kk.ts   (prints a Markdown table and the fitted growth exponent)
 *
 * Input: the exact two-Lorentz pair of the tests (one oscillator inside, one above 300–1200 nm),
 * sampled at N evenly spaced wavelengths. Each size is run REPEATS times after one warm-up run; the
 * median is reported. Growth exponent: least-squares slope of log(time) against log(N).
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

function lorentzTable(points: number): NkTable {
  const table: NkTable = { wavelengthNm: [], n: [], k: [] };
  for (let i = 0; i < points; i++) {
    const wl = 300 + (900 * i) / (points - 1);
    const e = photonEnergyEvFromWavelengthNm(wl);
    let eps1 = 1.2;
    let eps2 = 0;
    for (const [a, e0, gamma] of OSCILLATORS) {
      // A/(E0² − E² − iΓE) = A·(E0² − E² + iΓE)/((E0² − E²)² + Γ²E²)
      const re = e0 * e0 - e * e;
      const den = re * re + gamma * gamma * e * e;
      eps1 += (a * re) / den;
      eps2 += (a * gamma * e) / den;
    }
    const nk = nkFromEps(eps1, eps2);
    table.wavelengthNm.push(wl);
    table.n.push(nk.n);
    table.k.push(nk.k);
  }
  return table;
}

const median = (v: number[]) => [...v].sort((a, b) => a - b)[v.length >> 1];
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
