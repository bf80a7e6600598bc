/**
 * Throughput and latency of the n,k route under concurrent load on loopback, side by side with a bare
 * hono route that returns a constant from the same server process (the ceiling of hono +
 * @hono/node-server on this machine). Goal: the n,k route reaches at least half of that ceiling.
 *
 *   npx tsx scripts/bench-api.ts [--duration 10] [--connections 32] [--rounds 3]
 *
 * Each case gets `duration` seconds in total, split over `rounds` interleaved rounds (constant, n,k,
 * n,k with token, constant, ...), and the median round is reported: on a shared machine the load of
 * other processes then hits every case alike instead of whichever ran during a busy spell.
 * The server runs in a child process (this script with --serve), so autocannon's own CPU use is not
 * charged to the server. The registry is a temp file holding the Marrowick PECVD SiNx recipe A table
 * imported through the real pipeline, fitted with Tauc-Lorentz, KK-checked and approved.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { createRequire } from 'node:module';
import { openRegistry } from '../src/registry/open.ts';
import { startServer } from '../src/api/server.ts';
import { createMaterial } from '../src/service/materials.ts';
import { importMeasurement } from '../src/service/import-measurement.ts';
import { approve } from '../src/service/lifecycle.ts';
import { createToken } from '../src/service/tokens.ts';

/** The part of autocannon's result used here (autocannon ships no type declarations). */
interface LoadResult {
  requests: { average: number };
  latency: { p50: number; p99: number };
  errors: number;
  non2xx: number;
  timeouts: number;
}
type Autocannon = (opts: { url: string; headers: Record<string, string>; duration: number; connections: number; pipelining: number }) => Promise<LoadResult>;
const autocannon = createRequire(import.meta.url)('autocannon') as Autocannon;

const SCRIPT = fileURLToPath(import.meta.url);
const DATA = fileURLToPath(new URL('../data/marrowick/sinx-pecvd-recipe-a.csv', import.meta.url));
const CONSTANT_PATH = '/bench/constant';
const NK_PATH = '/api/v1/materials/sinx-pecvd-a/versions/1/nk?wavelengths_nm=450,550,650';

function arg(name: string, fallback: number): number {
  const i = process.argv.indexOf(`--${name}`);
  return i > 0 ? Number(process.argv[i + 1]) : fallback;
}

/** Child: serve the registry at argv[3] with the constant route added, print the URL, run until killed. */
async function serveChild(dbPath: string): Promise<void> {
  const registry = openRegistry(dbPath);
  const server = await startServer({
    registry,
    host: '127.0.0.1',
    port: 0,
    extend: (app) => app.get(CONSTANT_PATH, (c) => c.json({ ok: true })),
  });
  process.stdout.write(`${server.url}\n`);
  process.on('SIGTERM', () => server.close().then(() => (registry.close(), process.exit(0))));
}

function prepareRegistry(dbPath: string): string {
  const registry = openRegistry(dbPath);
  try {
    createMaterial(registry, { slug: 'sinx-pecvd-a', name: 'PECVD SiNx, recipe A (invented demo data)' }, 'bench-editor');
    const bytes = new Uint8Array(readFileSync(DATA));
    importMeasurement(registry, { slug: 'sinx-pecvd-a', bytes, file: 'sinx-pecvd-recipe-a.csv', fit: { model: 'tauc-lorentz' } }, 'bench-editor');
    approve(registry, 'sinx-pecvd-a@1', 'bench-approver');
    return createToken(registry, { user: 'bench', role: 'reader', createdBy: 'bench' }).token;
  } finally {
    registry.close();
  }
}

interface Row {
  name: string;
  rps: number;
  p50: number;
  p99: number;
  errors: number;
}

async function load(name: string, url: string, headers: Record<string, string>, duration: number, connections: number): Promise<Row> {
  const result = await autocannon({ url, headers, duration, connections, pipelining: 1 });
  const errors = result.errors + result.non2xx + result.timeouts;
  return { name, rps: result.requests.average, p50: result.latency.p50, p99: result.latency.p99, errors };
}

async function main(): Promise<void> {
  const duration = arg('duration', 10);
  const connections = arg('connections', 32);
  const rounds = arg('rounds', 3);
  const dir = mkdtempSync(join(tmpdir(), 'nkledger-bench-'));
  const dbPath = join(dir, 'bench.db');
  const token = prepareRegistry(dbPath);
  const child = spawn(process.execPath, ['--import', 'tsx', SCRIPT, '--serve', dbPath], { stdio: ['ignore', 'pipe', 'inherit'] });
  try {
    const url = await new Promise<string>((resolve, reject) => {
      child.stdout.once('data', (d: Buffer) => resolve(d.toString().trim()));
      child.once('exit', (code) => reject(new Error(`server exited with ${code}`)));
    });
    const check = await fetch(url + NK_PATH);
    if (check.status !== 200) throw new Error(`n,k route answered ${check.status}: ${await check.text()}`);
    // A short warm-up so JIT compilation is not measured.
    await load('warm-up', url + NK_PATH, {}, 2, connections);
    const cases: [string, string, Record<string, string>][] = [
      [`constant (GET ${CONSTANT_PATH})`, url + CONSTANT_PATH, {}],
      ['n,k, 3 wavelengths, anonymous', url + NK_PATH, {}],
      ['n,k, 3 wavelengths, bearer token', url + NK_PATH, { authorization: `Bearer ${token}` }],
    ];
    const runs: Row[][] = cases.map(() => []);
    for (let round = 0; round < rounds; round++) {
      for (const [i, [name, target, headers]] of cases.entries()) runs[i].push(await load(name, target, headers, duration / rounds, connections));
    }
    const median = (rs: Row[]) => [...rs].sort((a, b) => a.rps - b.rps)[Math.floor(rs.length / 2)];
    const rows = runs.map(median);
    const ceiling = rows[0].rps;
    console.log(`\n${connections} connections, ${duration} s per case in ${rounds} interleaved rounds (median round shown), loopback, server in a child process (node ${process.version})\n`);
    console.log('| case | req/s | p50 (ms) | p99 (ms) | errors | ratio to constant |');
    console.log('| --- | ---: | ---: | ---: | ---: | ---: |');
    for (const r of rows) {
      console.log(`| ${r.name} | ${Math.round(r.rps)} | ${r.p50} | ${r.p99} | ${r.errors} | ${(r.rps / ceiling).toFixed(2)} |`);
    }
  } finally {
    child.kill('SIGTERM');
    await new Promise((r) => child.once('exit', r));
    rmSync(dir, { recursive: true, force: true });
  }
}

if (process.argv[2] === '--serve') await serveChild(process.argv[3]);
else await main();
