/**
 * The registry on PostgreSQL served by one and by two `nkledger serve` processes, beside SQLite with one, in one
 * run (the issue: outgrow one machine). Two loads, each on every set-up in interleaved rounds:
 * - n,k reads: GET …/versions/1/nk?wavelengths_nm=450,550,650 of 50 approved versions (autocannon, `--connections`
 *   in all). With two servers there is no proxy: the load generator splits its connections over both ports
 *   (two autocannon runs at once); requests/s is their sum, mean and p50 latency the means of theirs, p99 the
 *   larger p99 (autocannon's percentiles are whole milliseconds; the mean is finer).
 * - uploads: 8 clients, each uploading a new table after the other (POST …/versions?kk=false, so the figure is
 *   the write path, not the KK check) to 8 shared materials; with two servers, 4 clients on each. Afterwards each
 *   material's numbers are checked 1..N with no gap or duplicate, and N against the uploads acknowledged.
 * Per round, each set-up gets `--duration` seconds per load; the ratios (PostgreSQL two servers / one,
 * PostgreSQL one / SQLite one) are taken within a round, their medians printed. The servers are real
 * `node bin/nkledger.js serve` processes on 127.0.0.1; PostgreSQL is a throw-away server started for the run
 * (test/helpers/postgres.ts, as the tests do: durability off, so the figures are of nkledger, not of fsync).
 * On a 2-core machine the load generator and the servers share the cores: there the scaling figures are
 * reported, not judged.
 *
 *   npm run build && npx tsx scripts/bench-postgres.ts [--duration 5] [--rounds 2] [--connections 16]
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { cpus, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs } from 'node:util';
import Database from 'better-sqlite3';
import pg from 'pg';
import { openRegistry } from '../src/registry/open.ts';
import { approve } from '../src/service/lifecycle.ts';
import { createMaterial } from '../src/service/materials.ts';
import { createToken } from '../src/service/tokens.ts';
import { importVersion } from '../src/service/versions.ts';
import { createDatabase, startPostgres } from '../test/helpers/postgres.ts';

/** The part of autocannon's result used here (autocannon ships no type declarations). */
interface LoadResult {
  requests: { average: number; total: number };
  latency: { average: number; p50: number; p99: number };
  duration: number;
  errors: number;
  non2xx: number;
  timeouts: number;
}
type Autocannon = (opts: { url: string; duration: number; connections: number; requests: { path: string }[] }) => Promise<LoadResult>;
const autocannon = createRequire(import.meta.url)('autocannon') as Autocannon;

const ROOT = fileURLToPath(new URL('..', import.meta.url));
const BIN = join(ROOT, 'bin', 'nkledger.js');
const { values } = parseArgs({
  options: {
    duration: { type: 'string', default: '5' },
    rounds: { type: 'string', default: '2' },
    connections: { type: 'string', default: '16' },
  },
});
const DURATION = Number(values.duration);
const ROUNDS = Number(values.rounds);
const CONNECTIONS = Number(values.connections);
const MATERIALS = 50;
const UPLOADERS = 8;
const UPLOAD_MATERIALS = Array.from({ length: UPLOADERS }, (_, i) => `upload-${i + 1}`);
const NK_PATHS = Array.from({ length: MATERIALS }, (_, i) => ({ path: `/api/v1/materials/${slugOf(i)}/versions/1/nk?wavelengths_nm=450,550,650` }));

function slugOf(i: number): string {
  return `bench-${String(i + 1).padStart(2, '0')}`;
}

/** An invented Cauchy-like glass (not a measurement), 400…800 nm every 10 nm; `a` makes each table differ. */
function table(a: number) {
  const wavelengthNm = Array.from({ length: 41 }, (_, i) => 400 + 10 * i);
  return { wavelengthNm, n: wavelengthNm.map((w) => a + 0.0042 / (w / 1000) ** 2), k: wavelengthNm.map((w) => 0.001 * (400 / w) ** 4) };
}

function tableCsv(a: number): string {
  const t = table(a);
  return `wavelength_nm,n,k\n${t.wavelengthNm.map((w, i) => `${w},${t.n[i].toFixed(7)},${t.k[i].toFixed(7)}`).join('\n')}\n`;
}

/** 50 materials with an approved version 1, the 8 upload targets (empty), and an editor token for the uploads. */
async function fill(db: string): Promise<string> {
  const registry = await openRegistry(db);
  try {
    for (let i = 0; i < MATERIALS; i++) {
      await createMaterial(registry, { slug: slugOf(i), name: `Bench glass ${i + 1}` }, 'bench-editor');
      await importVersion(registry, { slug: slugOf(i), table: table(1.45 + i / 1000) }, 'bench-editor');
      await approve(registry, `${slugOf(i)}@1`, 'bench-approver');
    }
    for (const slug of UPLOAD_MATERIALS) await createMaterial(registry, { slug, name: `Upload target ${slug}` }, 'bench-editor');
    return (await createToken(registry, { user: 'bench-uploader', role: 'editor', createdBy: 'bench' })).token;
  } finally {
    await registry.close();
  }
}

interface Served {
  url: string;
  child: ChildProcess;
}

/** Set when the run is over and this script stops the servers. */
let stopping = false;

function serve(db: string): Promise<Served> {
  const child = spawn(process.execPath, [BIN, 'serve', '--db', db, '--host', '127.0.0.1', '--port', '0'], {
    stdio: ['ignore', 'pipe', 'pipe'],
    env: { ...process.env, NKLEDGER_DB: '' },
  });
  return new Promise((resolve, reject) => {
    let text = '';
    // Its stderr is shown only if it stops on its own (its shutdown notice at the end is not news).
    child.stderr?.on('data', (d) => (text += d));
    child.once('exit', (code, signal) => {
      if (!stopping) console.error(`serve --db ${db} stopped (${code ?? signal}):\n${text}`);
    });
    child.stdout?.on('data', (d) => {
      text += d;
      const m = /at (http:\/\/127\.0\.0\.1:\d+)\//.exec(text);
      if (m) resolve({ url: m[1], child });
    });
    child.once('exit', (code) => reject(new Error(`serve --db ${db} exited (${code}): ${text}`)));
  });
}

interface Figures {
  rate: number;
  /** Mean latency, ms (autocannon's percentiles are whole milliseconds). */
  mean: number;
  p50: number;
  p99: number;
  errors: number;
}

/** n,k reads spread over `servers`, CONNECTIONS in all, for DURATION seconds. */
async function reads(servers: Served[]): Promise<Figures> {
  const share = Math.max(1, Math.floor(CONNECTIONS / servers.length));
  const results = await Promise.all(servers.map((s) => autocannon({ url: s.url, duration: DURATION, connections: share, requests: NK_PATHS })));
  return {
    rate: results.reduce((sum, r) => sum + r.requests.total / (r.duration || DURATION), 0),
    mean: results.reduce((sum, r) => sum + r.latency.average, 0) / results.length,
    p50: results.reduce((sum, r) => sum + r.latency.p50, 0) / results.length,
    p99: Math.max(...results.map((r) => r.latency.p99)),
    errors: results.reduce((sum, r) => sum + r.errors + r.non2xx + r.timeouts, 0),
  };
}

let serial = 0;

/** UPLOADERS clients uploading one table after the other for DURATION seconds, client i through servers[i % n]. */
async function uploads(servers: Served[], token: string): Promise<Figures & { acknowledged: Map<string, number> }> {
  const acknowledged = new Map<string, number>();
  const latencies: number[] = [];
  let errors = 0;
  const started = performance.now();
  const deadline = started + DURATION * 1000;
  await Promise.all(
    Array.from({ length: UPLOADERS }, async (_, i) => {
      const server = servers[i % servers.length];
      for (let j = 0; performance.now() < deadline; j++) {
        const slug = UPLOAD_MATERIALS[(i + j) % UPLOADERS];
        const t0 = performance.now();
        const res = await fetch(`${server.url}/api/v1/materials/${slug}/versions?kk=false`, {
          method: 'POST',
          headers: { 'content-type': 'text/csv', authorization: `Bearer ${token}` },
          body: tableCsv(1.6 + ++serial * 1e-6),
        });
        await res.arrayBuffer();
        latencies.push(performance.now() - t0);
        if (res.status === 201) acknowledged.set(slug, (acknowledged.get(slug) ?? 0) + 1);
        else errors++;
      }
    }),
  );
  const seconds = (performance.now() - started) / 1000;
  latencies.sort((x, y) => x - y);
  const total = [...acknowledged.values()].reduce((s, n) => s + n, 0);
  return {
    rate: total / seconds,
    mean: latencies.reduce((s, x) => s + x, 0) / Math.max(1, latencies.length),
    p50: latencies[Math.floor(latencies.length / 2)] ?? 0,
    p99: latencies[Math.floor(latencies.length * 0.99)] ?? 0,
    errors,
    acknowledged,
  };
}

interface Numbering {
  slug: string;
  last: number;
  count: number;
  distinct: number;
  low: number | null;
  high: number | null;
}

const NUMBERING_SQL = `SELECT m.slug, m.last_version AS last, count(v.id) AS count, count(DISTINCT v.number) AS distinct_numbers,
  min(v.number) AS low, max(v.number) AS high
  FROM materials m LEFT JOIN material_versions v ON v.material_id = m.id WHERE m.slug LIKE 'upload-%' GROUP BY m.id, m.slug, m.last_version`;

type NumberingRow = { slug: string; last: number | string; count: number | string; distinct_numbers: number | string; low: unknown; high: unknown };
const toNumbering = (r: NumberingRow): Numbering => ({
  slug: r.slug,
  last: Number(r.last),
  count: Number(r.count),
  distinct: Number(r.distinct_numbers),
  low: r.low === null ? null : Number(r.low),
  high: r.high === null ? null : Number(r.high),
});

/** Problems with the upload materials' numbering: each 1..N, no gap, no duplicate, N = the uploads acknowledged. */
function numberingProblems(rows: Numbering[], acknowledged: Map<string, number>): string[] {
  const problems: string[] = [];
  for (const r of rows) {
    const acked = acknowledged.get(r.slug) ?? 0;
    const gapFree = r.count === r.distinct && r.count === r.last && (r.count === 0 || (r.low === 1 && r.high === r.count));
    if (!gapFree) problems.push(`${r.slug}: ${r.count} versions, ${r.distinct} distinct numbers ${r.low}..${r.high}, last_version ${r.last}`);
    if (r.count !== acked) problems.push(`${r.slug}: ${r.count} versions stored, ${acked} uploads acknowledged`);
  }
  return problems;
}

/** The median (the mean of the middle two for an even count). */
function median(v: number[]): number {
  const sorted = [...v].sort((a, b) => a - b);
  const mid = Math.floor(sorted.length / 2);
  return sorted.length % 2 === 1 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

if (!existsSync(join(ROOT, 'dist', 'nkledger.js'))) {
  console.error('no build: run `npm run build` first');
  process.exit(4);
}
const server = await startPostgres();
if ('missing' in server) {
  console.error(server.missing);
  process.exit(4);
}
const dir = mkdtempSync(join(tmpdir(), 'nkledger-bench-pg-'));
const children: ChildProcess[] = [];
try {
  const sqliteDb = join(dir, 'bench.db');
  const pgDb = await createDatabase(server.adminUrl, 'nkledger_bench');
  const sqliteToken = await fill(sqliteDb);
  const pgToken = await fill(pgDb);
  const sqliteServer = await serve(sqliteDb);
  children.push(sqliteServer.child);
  const pgServers = [await serve(pgDb), await serve(pgDb)];
  children.push(...pgServers.map((s) => s.child));

  const setups = [
    { name: 'SQLite, one server', servers: [sqliteServer], token: sqliteToken },
    { name: 'PostgreSQL, one server', servers: [pgServers[0]], token: pgToken },
    { name: 'PostgreSQL, two servers', servers: pgServers, token: pgToken },
  ];
  const readFigures: Figures[][] = setups.map(() => []);
  const uploadFigures: Figures[][] = setups.map(() => []);
  const acknowledged = { sqlite: new Map<string, number>(), pg: new Map<string, number>() };
  // Warm-up: every server has read every version once.
  for (const s of [sqliteServer, ...pgServers]) for (const { path } of NK_PATHS) await (await fetch(`${s.url}${path}`)).arrayBuffer();
  for (let round = 0; round < ROUNDS; round++) {
    for (let i = 0; i < setups.length; i++) readFigures[i].push(await reads(setups[i].servers));
    for (let i = 0; i < setups.length; i++) {
      const r = await uploads(setups[i].servers, setups[i].token);
      uploadFigures[i].push(r);
      const into = i === 0 ? acknowledged.sqlite : acknowledged.pg;
      for (const [slug, n] of r.acknowledged) into.set(slug, (into.get(slug) ?? 0) + n);
    }
  }

  // Numbering after all uploads: read on connections of this script's own.
  const sqlite = new Database(sqliteDb, { readonly: true });
  const sqliteRows = (sqlite.prepare(NUMBERING_SQL).all() as NumberingRow[]).map(toNumbering);
  sqlite.close();
  const client = new pg.Client({ connectionString: pgDb });
  await client.connect();
  const pgRows = (await client.query<NumberingRow>(NUMBERING_SQL)).rows.map(toNumbering);
  await client.end();
  const problems = [...numberingProblems(sqliteRows, acknowledged.sqlite), ...numberingProblems(pgRows, acknowledged.pg)];

  const row = (kind: string, name: string, f: Figures[], unit: string) => {
    const rate = median(f.map((x) => x.rate));
    const errors = f.reduce((s, x) => s + x.errors, 0);
    return `| ${kind} | ${name} | ${rate.toFixed(0)} ${unit} | ${median(f.map((x) => x.mean)).toFixed(2)} | ${median(f.map((x) => x.p50)).toFixed(1)} | ${median(f.map((x) => x.p99)).toFixed(1)} | ${errors} |`;
  };
  console.log('| load | set-up | rate (median of rounds) | mean ms | p50 ms | p99 ms | errors |\n| --- | --- | ---: | ---: | ---: | ---: | ---: |');
  setups.forEach((s, i) => console.log(row('n,k reads', s.name, readFigures[i], 'req/s')));
  setups.forEach((s, i) => console.log(row(`uploads, ${UPLOADERS} clients`, s.name, uploadFigures[i], 'uploads/s')));
  const ratio = (f: Figures[][], top: number, bottom: number) => median(f[top].map((x, r) => x.rate / f[bottom][r].rate)).toFixed(2);
  console.log('\n| ratio (median of per-round ratios) | n,k reads | uploads |\n| --- | ---: | ---: |');
  console.log(`| PostgreSQL two servers / one server (scaling) | ${ratio(readFigures, 2, 1)} | ${ratio(uploadFigures, 2, 1)} |`);
  console.log(`| PostgreSQL one server / SQLite one server | ${ratio(readFigures, 1, 0)} | ${ratio(uploadFigures, 1, 0)} |`);
  const total = (m: Map<string, number>) => [...m.values()].reduce((s, n) => s + n, 0);
  console.log(
    `\nnumbering after ${total(acknowledged.sqlite)} SQLite and ${total(acknowledged.pg)} PostgreSQL uploads: ` +
      (problems.length === 0 ? `1..N per material, no gap, no duplicate, every acknowledged upload stored` : `PROBLEMS\n${problems.join('\n')}`),
  );
  console.log(
    `${ROUNDS} rounds × ${DURATION} s per load and set-up, ${CONNECTIONS} read connections, ${cpus().length} cores, Node ${process.version}, ` +
      `PostgreSQL on 127.0.0.1 with fsync off`,
  );
  if (problems.length > 0) process.exitCode = 3;
} finally {
  stopping = true;
  await Promise.all(
    children.map(
      (child) =>
        new Promise((resolve) => {
          if (child.exitCode !== null) return resolve(null);
          child.once('exit', resolve);
          child.kill('SIGTERM');
        }),
    ),
  );
  rmSync(dir, { recursive: true, force: true });
  server.stop();
}
