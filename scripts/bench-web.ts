/**
 * Benchmark of the web pages' server-side rendering (goal: a material with 50 versions renders in < 50 ms).
 * Run: npx tsx scripts/bench-web.ts [--rounds 40]   (prints a Markdown table)
 *
 * A temp registry holds one material with 50 versions (a 300-point invented Cauchy table each, with a Cauchy
 * fit and a KK report; approved, retired, withdrawn and draft ones) and its audit history. Each round requests,
 * in-process through hono's app.request (no socket, no compression), the material page, a version page and
 * the index; beside each, the reference is the API's JSON of the same thing (GET /api/v1/materials/{slug},
 * /versions/{n}, /materials), so the ratio says what the page costs over reading the same records. Rounds
 * interleave page and reference; the first 5 rounds warm up and are not counted. Median and 90th percentile.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { createApp } from '../src/api/app.ts';
import { openRegistry } from '../src/registry/open.ts';
import { ComputePool } from '../src/service/compute-pool.ts';
import { importMeasurement } from '../src/service/import-measurement.ts';
import { approve, retire, withdraw } from '../src/service/lifecycle.ts';
import { createMaterial } from '../src/service/materials.ts';
import { createWebPages } from '../src/web/app.tsx';

const { values } = parseArgs({ options: { rounds: { type: 'string', default: '40' } } });
const ROUNDS = Number(values.rounds);
const WARM_UP = 5;
const VERSIONS = 50;

const dir = mkdtempSync(join(tmpdir(), 'nkledger-bench-web-'));
const registry = await openRegistry(join(dir, 'bench.db'));
try {
  await createMaterial(registry, { slug: 'sinx-bench', name: 'Benchmark nitride (invented)', tags: ['bench', 'nitride'] }, 'r.okafor');
  for (let v = 1; v <= VERSIONS; v++) {
    // Invented: n = A + B/λ² with A drifting per version, k = 0, 300 rows over 400–1000 nm.
    const lines = ['wavelength_nm,n,k'];
    for (let i = 0; i < 300; i++) {
      const nm = 400 + i * 2;
      lines.push(`${nm},${(1.95 + v * 1e-3 + 0.012 / (nm / 1000) ** 2).toFixed(6)},0`);
    }
    const bytes = new TextEncoder().encode(lines.join('\n'));
    await importMeasurement(registry, { slug: 'sinx-bench', bytes, file: `run-${v}.csv`, fit: { model: 'cauchy' } }, 'r.okafor');
    if (v % 5 === 0) await withdraw(registry, `sinx-bench@${v}`, 'm.lindqvist', 'bench: withdrawn');
    else if (v < VERSIONS - 2) await approve(registry, `sinx-bench@${v}`, 'm.lindqvist');
    if (v % 5 !== 0 && v < VERSIONS - 10) await retire(registry, `sinx-bench@${v}`, 'bench: superseded', 'm.lindqvist');
  }
  const compute = new ComputePool({ threads: 1 });
  const pages = createWebPages({ registry, compute, loopback: true });
  const api = createApp({ registry, compute, loopback: true });
  const latest = VERSIONS - 3;
  const cases = [
    { name: `material page, ${VERSIONS} versions`, page: '/materials/sinx-bench', ref: '/api/v1/materials/sinx-bench' },
    {
      name: 'version page (300 rows, fit + KK plots)',
      page: `/materials/sinx-bench/versions/${latest}`,
      ref: `/api/v1/materials/sinx-bench/versions/${latest}`,
    },
    { name: 'index', page: '/', ref: '/api/v1/materials' },
  ];
  const times = cases.map(() => ({ page: [] as number[], ref: [] as number[] }));
  const timed = async (app: { request(path: string): Response | Promise<Response> }, path: string) => {
    const t = performance.now();
    const res = await app.request(path);
    await res.arrayBuffer();
    if (res.status !== 200) throw new Error(`${path}: ${res.status}`);
    return performance.now() - t;
  };
  for (let round = 0; round < WARM_UP + ROUNDS; round++) {
    for (const [i, c] of cases.entries()) {
      const page = await timed(pages, c.page);
      const ref = await timed(api, c.ref);
      if (round >= WARM_UP) {
        times[i].page.push(page);
        times[i].ref.push(ref);
      }
    }
  }
  const quantile = (v: number[], q: number) => [...v].sort((a, b) => a - b)[Math.min(v.length - 1, Math.floor(q * v.length))];
  console.log(`\n${ROUNDS} rounds after ${WARM_UP} warm-up, Node ${process.version}\n`);
  console.log('| page | median ms | p90 ms | API JSON of the same, median ms | ratio page ÷ JSON |');
  console.log('| --- | ---: | ---: | ---: | ---: |');
  for (const [i, c] of cases.entries()) {
    const p = quantile(times[i].page, 0.5);
    const r = quantile(times[i].ref, 0.5);
    console.log(`| ${c.name} | ${p.toFixed(1)} | ${quantile(times[i].page, 0.9).toFixed(1)} | ${r.toFixed(2)} | ${(p / r).toFixed(1)} |`);
  }
  await compute.close();
} finally {
  await registry.close();
  rmSync(dir, { recursive: true, force: true });
}
