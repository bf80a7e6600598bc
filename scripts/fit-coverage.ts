/**
 * Seeded Monte Carlo coverage of the fitter's standard errors: DRAWS synthetic Tauc-Lorentz tables with sigma
 * columns and Gaussian noise of exactly those sigmas, each fitted from the automatic guess; prints for every
 * parameter the share of draws whose 1σ interval value ± stderr covers the generating value (ideal 68.3 %
 * for a Gaussian estimate; with 200 draws the binomial standard deviation of that share is 3.3 %).
 * Run: npx tsx scripts/fit-coverage.ts [draws] [seed]   (test/fit/coverage.test.ts runs it with 200 draws)
 * Model: Tauc-Lorentz (Jellison & Modine 1996); parameters those of test/reference/fit-tauc-lorentz.json
 * (scripts/make-fit-reference.py).
 */
import { pathToFileURL } from 'node:url';
import { fitTable } from '../src/fit/fit.ts';
import { buildModel } from '../src/models/catalogue.ts';
import { seededNormal } from '../src/fit/random.ts';
import type { NkTable } from '../src/table.ts';
const TRUTH = { A: 122.0, E0: 3.45, C: 2.54, Eg: 1.2, eps_inf: 1.15 };
const SIGMA_N = 1e-3;
const SIGMA_K = 5e-4;
export const DRAWS = 200;

/** Coverage of every parameter over `draws` seeded tables (exported for the figure in docs/fitting.md). */
export function coverage(draws: number, seed = 2026): Record<string, number> {
  const model = buildModel('tauc-lorentz');
  const wavelengthNm = Array.from({ length: 120 }, (_, i) => 250 + (1350 * i) / 119);
  const exact = model.nk(wavelengthNm, TRUTH);
  const normal = seededNormal(seed);
  const hits: Record<string, number> = Object.fromEntries(Object.keys(TRUTH).map((p) => [p, 0]));
  for (let d = 0; d < draws; d++) {
    const table: NkTable = {
      wavelengthNm,
      n: exact.n.map((v) => v + SIGMA_N * normal()),
      k: exact.k.map((v) => v + SIGMA_K * normal()),
      sigmaN: wavelengthNm.map(() => SIGMA_N),
      sigmaK: wavelengthNm.map(() => SIGMA_K),
    };
    const report = fitTable(table, { model: 'tauc-lorentz' });
    for (const [p, truth] of Object.entries(TRUTH)) {
      const { value, stderr } = report.parameters[p];
      if (stderr !== null && Math.abs(value - truth) <= stderr) hits[p]++;
    }
  }
  return Object.fromEntries(Object.entries(hits).map(([p, h]) => [p, h / draws]));
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const draws = Number(process.argv[2] ?? DRAWS);
  const seed = Number(process.argv[3] ?? 2026);
  const result = coverage(draws, seed);
  console.log(`| parameter | 1σ coverage (${draws} draws, seed ${seed}) |`);
  console.log('| --- | --- |');
  for (const [p, c] of Object.entries(result)) console.log(`| ${p} | ${(100 * c).toFixed(1)} % |`);
}
