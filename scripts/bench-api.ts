/**
 * Throughput and latency of the n,k route under concurrent load on loopback, side by side with a bare
 * hono route that returns a constant from the same server process (the ceiling of hono +
 * @hono/node-server on this machine). Goal: the n,k route reaches at least half of that ceiling.
 *
 *   npx tsx scripts/bench-api.ts [--duration 10] [--connections 32] [--rounds 5]
 *
 * Each case gets `duration` seconds in total, split over `rounds` interleaved rounds (constant, n,k,
 * n,k with token, constant, ...); medians over the rounds are reported, and each ratio is taken
 * within a round: on a shared machine the load of other processes then hits both sides of a ratio
 * alike instead of whichever case ran during a busy spell.
 * The server runs in a child process (this script with --serve), so autocannon's own CPU use is not
 * charged to the server. The child reports its own CPU time (process.cpuUsage) around every round, so
 * the table also gives the server's CPU per request: on two cores shared by client and server,
 * req/s moves with whatever else runs, while CPU per request is the steadier figure.
 * The registry is a temp file holding the Marrowick PECVD SiNx recipe A table imported through the
 * real pipeline, fitted with Tauc-Lorentz, KK-checked and approved.
 * The last case reads n,k while one client uploads the same table continuously (one upload after
 * the other, each with a Tauc-Lorentz fit and the KK check): fits and checks run on the server's
 * compute threads, so reads should keep at least half of their idle throughput (the ratio printed
 * below the table, per round against the anonymous n,k round).
 */
import { spawn, type ChildProcess } from 'node:child_process';
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
import { maxOf, minOf } from '../src/optics/extremes.ts';

/** The part of autocannon's result used here (autocannon ships no type declarations). */
interface LoadResult {
  requests: { average: number; total: number };
  latency: { p50: number; p99: number };
  errors: number;
  non2xx: number;
  timeouts: number;
}
type Autocannon = (opts: {
  url: string;
  headers: Record<string, string>;
  duration: number;
  connections: number;
  pipelining: number;
}) => Promise<LoadResult>;
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
  const registry = await openRegistry(dbPath);
  const server = await startServer({
    registry,
    host: '127.0.0.1',
    port: 0,
    extend: (app) => app.get(CONSTANT_PATH, (c) => c.json({ ok: true })),
  });
  process.stdout.write(`${server.url}\n`);
  process.on('message', () => process.send?.(process.cpuUsage()));
  process.on('SIGTERM', () => server.close().then(() => (registry.close(), process.exit(0))));
}

async function prepareRegistry(dbPath: string): Promise<{ token: string; editorToken: string }> {
  const registry = await openRegistry(dbPath);
  try {
    await createMaterial(registry, { slug: 'sinx-pecvd-a', name: 'PECVD SiNx, recipe A (invented demo data)' }, 'bench-editor');
    const bytes = new Uint8Array(readFileSync(DATA));
    await importMeasurement(
      registry,
      { slug: 'sinx-pecvd-a', bytes, file: 'sinx-pecvd-recipe-a.csv', fit: { model: 'tauc-lorentz' } },
      'bench-editor',
    );
    await approve(registry, 'sinx-pecvd-a@1', 'bench-approver');
    return {
      token: (await createToken(registry, { user: 'bench', role: 'reader', createdBy: 'bench' })).token,
      editorToken: (await createToken(registry, { user: 'bench-uploader', role: 'editor', createdBy: 'bench' })).token,
    };
  } finally {
    await registry.close();
  }
}

interface Row {
  name: string;
  rps: number;
  p50: number;
  p99: number;
  errors: number;
  /** Server CPU time (user + system) per request, in µs. */
  cpuUs: number;
}

/** The server child's CPU time so far, in µs (user + system), asked over the IPC channel. */
function serverCpuUs(child: ChildProcess): Promise<number> {
  return new Promise((resolve) => {
    child.once('message', (usage) => resolve((usage as NodeJS.CpuUsage).user + (usage as NodeJS.CpuUsage).system));
    child.send('cpu');
  });
}

async function load(
  child: ChildProcess,
  name: string,
  url: string,
  headers: Record<string, string>,
  duration: number,
  connections: number,
): Promise<Row> {
  const before = await serverCpuUs(child);
  const result = await autocannon({ url, headers, duration, connections, pipelining: 1 });
  const cpuUs = ((await serverCpuUs(child)) - before) / Math.max(1, result.requests.total);
  const errors = result.errors + result.non2xx + result.timeouts;
  return { name, rps: result.requests.average, p50: result.latency.p50, p99: result.latency.p99, errors, cpuUs };
}

/**
 * One client uploading continuously (fit + KK per upload) until `stop()`; each upload differs by its
 * notes, so none is refused as a duplicate. Returns the count of uploads that got 201.
 */
/** Numbers the uploads of the whole run (not per round), so no two carry the same notes. */
let uploadSerial = 0;

function uploadContinuously(url: string, editorToken: string): { stop(): Promise<{ ok: number; failed: number }> } {
  const table = readFileSync(DATA);
  let running = true;
  let ok = 0;
  let failed = 0;
  const loop = (async () => {
    while (running) {
      const notes = `bench upload ${++uploadSerial} ${process.pid}`;
      const res = await fetch(`${url}/api/v1/materials/sinx-pecvd-a/versions?fit=tauc-lorentz&notes=${encodeURIComponent(notes)}`, {
        method: 'POST',
        headers: { 'content-type': 'text/csv', authorization: `Bearer ${editorToken}` },
        body: table,
      });
      if (res.status === 201) await res.arrayBuffer();
      if (res.status === 201) ok++;
      else if (failed++ === 0) console.error(`upload refused: ${res.status} ${await res.text()}`);
    }
  })();
  return {
    async stop() {
      running = false;
      await loop;
      return { ok, failed };
    },
  };
}

async function main(): Promise<void> {
  const duration = arg('duration', 10);
  const connections = arg('connections', 32);
  const rounds = arg('rounds', 5);
  const dir = mkdtempSync(join(tmpdir(), 'nkledger-bench-'));
  const dbPath = join(dir, 'bench.db');
  const { token, editorToken } = await prepareRegistry(dbPath);
  const child = spawn(process.execPath, ['--import', 'tsx', SCRIPT, '--serve', dbPath], { stdio: ['ignore', 'pipe', 'inherit', 'ipc'] });
  try {
    const url = await new Promise<string>((resolve, reject) => {
      child.stdout?.once('data', (d: Buffer) => resolve(d.toString().trim()));
      child.once('exit', (code) => reject(new Error(`server exited with ${code}`)));
    });
    const check = await fetch(url + NK_PATH);
    if (check.status !== 200) throw new Error(`n,k route answered ${check.status}: ${await check.text()}`);
    // A short warm-up so JIT compilation is not measured.
    await load(child, 'warm-up', url + NK_PATH, {}, 2, connections);
    const cases: [string, string, Record<string, string>][] = [
      [`constant (GET ${CONSTANT_PATH})`, url + CONSTANT_PATH, {}],
      ['n,k, 3 wavelengths, anonymous', url + NK_PATH, {}],
      ['n,k, 3 wavelengths, bearer token', url + NK_PATH, { authorization: `Bearer ${token}` }],
    ];
    const UPLOADING = 'n,k, 3 wavelengths, anonymous, one client uploading (fit + KK) continuously';
    const runs: Row[][] = [...cases.map(() => []), []] as Row[][];
    let uploads = { ok: 0, failed: 0 };
    for (let round = 0; round < rounds; round++) {
      for (const [i, [name, target, headers]] of cases.entries())
        runs[i].push(await load(child, name, target, headers, duration / rounds, connections));
      const uploader = uploadContinuously(url, editorToken);
      runs[cases.length].push(await load(child, UPLOADING, url + NK_PATH, {}, duration / rounds, connections));
      const done = await uploader.stop();
      uploads = { ok: uploads.ok + done.ok, failed: uploads.failed + done.failed };
    }
    const median = (xs: number[]) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
    const constant = runs[0];
    // Ratios are taken round by round (each case against the constant round just before it), so a
    // busy spell on the machine that slows one round slows both sides of its ratio.
    const rpsRatios = runs.map((rs) => rs.map((r, round) => r.rps / constant[round].rps));
    const cpuRatios = runs.map((rs) => rs.map((r, round) => constant[round].cpuUs / r.cpuUs));
    const range = (xs: number[]) => `${median(xs).toFixed(2)} (${minOf(xs).toFixed(2)}–${maxOf(xs).toFixed(2)})`;
    console.log(
      `\n${connections} connections, ${duration} s per case in ${rounds} interleaved rounds, loopback, server in a child process (node ${process.version})`,
    );
    console.log('Medians over the rounds; ratios are per round, median (lowest–highest).\n');
    console.log('| case | req/s | p50 (ms) | p99 (ms) | errors | req/s ratio to constant | server CPU µs/request | CPU ratio (constant ÷ case) |');
    console.log('| --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: |');
    for (const [i, rs] of runs.entries()) {
      const errors = rs.reduce((sum, r) => sum + r.errors, 0);
      const cells = [rs[0].name, Math.round(median(rs.map((r) => r.rps))), median(rs.map((r) => r.p50)), median(rs.map((r) => r.p99)), errors];
      cells.push(range(rpsRatios[i]), median(rs.map((r) => r.cpuUs)).toFixed(1), range(cpuRatios[i]));
      console.log(`| ${cells.join(' | ')} |`);
    }
    const underUpload = runs[cases.length].map((r, round) => r.rps / runs[1][round].rps);
    console.log(`\nReads while one client uploads ÷ idle reads (anonymous n,k, per round): ${range(underUpload)}; goal ≥ 0.50.`);
    console.log(`Uploads during the measured rounds: ${uploads.ok} stored (201), ${uploads.failed} refused.`);
  } finally {
    child.kill('SIGTERM');
    await new Promise((r) => child.once('exit', r));
    rmSync(dir, { recursive: true, force: true });
  }
}

if (process.argv[2] === '--serve') await serveChild(process.argv[3]);
else await main();
