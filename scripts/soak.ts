/**
 * Soak test: `nkledger serve` on a temp registry, bound to 127.0.0.1 only, under a mixed read/write load
 * for a bounded time; reports requests served, errors (goal: zero), the server's RSS growth and latency
 * percentiles, then stops the server and runs `nkledger verify` on the file.
 *
 *   npm run build && npx tsx scripts/soak.ts [--seconds 180] [--clients 8]   (bin/nkledger.js runs the build)
 *
 * The mix, per request: 8 % table uploads (the full import pipeline with the Kramers-Kronig check),
 * 6 % approvals of drafts, 46 % n,k reads (two to five wavelengths of an approved version), 30 % version
 * reads (content and provenance; the client re-hashes each one), 10 % material searches. An error is any
 * network failure, any 5xx, any status other than the expected one, or a version whose hash does not verify.
 * RSS is read from /proc/PID/status every second; growth is measured from the end of the first tenth of
 * the run (the warm-up fills caches and JIT) to the end.
 */
import { spawn } from 'node:child_process';
import { readFileSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { fileURLToPath } from 'node:url';
import { openRegistry } from '../src/registry/open.ts';
import { versionSha256 } from '../src/registry/records.ts';
import { createToken } from '../src/service/tokens.ts';

const BIN = fileURLToPath(new URL('../bin/nkledger.js', import.meta.url));
const MATERIALS = ['soak-a', 'soak-b', 'soak-c', 'soak-d'];

function arg(name: string, fallback: number): number {
  const i = process.argv.indexOf(`--${name}`);
  const value = i > 0 ? Number(process.argv[i + 1]) : fallback;
  if (!(value > 0)) throw new Error(`--${name} needs a positive number`);
  return value;
}

/** An invented smooth n,k table (not a measurement); `a` makes each upload's content distinct. */
function tableCsv(a: number): string {
  const rows = ['wavelength_nm,n,k'];
  for (let wl = 400; wl <= 900; wl += 10) rows.push(`${wl},${(a + 0.004 / (wl / 1000) ** 2).toFixed(7)},${(0.002 * (400 / wl) ** 4).toFixed(7)}`);
  return `${rows.join('\n')}\n`;
}

function rssKiB(pid: number): number {
  const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
  return m ? Number(m[1]) : NaN;
}

function percentile(sorted: number[], p: number): number {
  return sorted.length === 0 ? NaN : sorted[Math.min(sorted.length - 1, Math.floor((p / 100) * sorted.length))];
}

async function main(): Promise<void> {
  const seconds = arg('seconds', 180);
  const clients = arg('clients', 8);
  const dir = mkdtempSync(join(tmpdir(), 'nkledger-soak-'));
  const db = join(dir, 'soak.db');
  const setup = await openRegistry(db);
  const editor = (await createToken(setup, { user: 'soak-editor', role: 'editor', createdBy: 'soak' })).token;
  const approver = (await createToken(setup, { user: 'soak-approver', role: 'approver', createdBy: 'soak' })).token;
  await setup.close();

  const server = spawn(process.execPath, [BIN, 'serve', '--db', db, '--host', '127.0.0.1', '--port', '0'], { stdio: ['ignore', 'pipe', 'pipe'] });
  let serverStderr = '';
  server.stderr.on('data', (d) => (serverStderr += d));
  const url = await new Promise<string>((resolve, reject) => {
    server.once('exit', (code) => reject(new Error(`serve exited (${code}): ${serverStderr}`)));
    createInterface({ input: server.stdout }).on('line', (line) => {
      const m = /at (http:\/\/127\.0\.0\.1:\d+)\//.exec(line);
      if (m) resolve(m[1]);
    });
  });

  const latencies: number[] = [];
  const byKind: Record<string, number> = {};
  const errors: string[] = [];
  const approved: string[] = [];
  const drafts: string[] = [];
  let uploads = 0;

  async function request(kind: string, path: string, expect: number[], init: RequestInit & { token?: string } = {}): Promise<Response | undefined> {
    const headers = new Headers(init.headers);
    if (init.token) headers.set('authorization', `Bearer ${init.token}`);
    const start = performance.now();
    try {
      const res = await fetch(`${url}${path}`, { ...init, headers });
      const body = await res.arrayBuffer();
      latencies.push(performance.now() - start);
      byKind[kind] = (byKind[kind] ?? 0) + 1;
      if (!expect.includes(res.status)) {
        errors.push(`${kind} ${path}: ${res.status} ${new TextDecoder().decode(body).slice(0, 300)}`);
        return undefined;
      }
      return new Response(res.status === 304 ? null : body, { status: res.status, headers: res.headers });
    } catch (err) {
      errors.push(`${kind} ${path}: ${(err as Error).message}`);
      return undefined;
    }
  }

  for (const slug of MATERIALS) {
    await request('create', '/api/v1/materials', [201], {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ slug, name: `Soak ${slug}` }),
      token: editor,
    });
  }

  async function upload(): Promise<void> {
    const slug = MATERIALS[uploads % MATERIALS.length];
    const a = 1.4 + ++uploads * 1e-6;
    const res = await request('upload', `/api/v1/materials/${slug}/versions`, [201], {
      method: 'POST',
      headers: { 'content-type': 'text/csv' },
      body: tableCsv(a),
      token: editor,
    });
    if (res) drafts.push(((await res.json()) as { ref: string }).ref);
  }

  async function approveOne(): Promise<void> {
    const ref = drafts.shift();
    if (!ref) return upload();
    const [slug, n] = ref.split('@');
    const res = await request('approve', `/api/v1/materials/${slug}/versions/${n}/approve`, [200], { method: 'POST', token: approver });
    if (res) approved.push(ref);
  }

  async function step(r: number, i: number): Promise<void> {
    if (r < 0.08) return upload();
    if (r < 0.14) return approveOne();
    const ref = approved[i % approved.length];
    const [slug, n] = ref.split('@');
    if (r < 0.6) {
      const count = 2 + (i % 4);
      const wavelengths = Array.from({ length: count }, (_, j) => 400 + ((i * 37 + j * 113) % 500)).join(',');
      await request('nk', `/api/v1/materials/${slug}/versions/${n}/nk?wavelengths_nm=${wavelengths}`, [200]);
    } else if (r < 0.9) {
      const res = await request('version', `/api/v1/materials/${slug}/versions/${n}`, [200]);
      if (res) {
        const v = (await res.json()) as { content: never; provenance: never; sha256: string };
        if (versionSha256(v.content, v.provenance) !== v.sha256) errors.push(`version ${ref}: hash does not verify`);
      }
    } else {
      await request('search', `/api/v1/materials?q=${encodeURIComponent(slug.slice(0, 6))}`, [200]);
    }
  }

  // Seed: a few approved versions so reads have something to read.
  for (let i = 0; i < 4; i++) await upload();
  while (drafts.length > 0) await approveOne();
  if (approved.length === 0) throw new Error(`could not seed the registry: ${errors.join('; ')}`);

  const rss: { t: number; kib: number }[] = [];
  const started = performance.now();
  const deadline = started + seconds * 1000;
  const sampler = setInterval(() => rss.push({ t: (performance.now() - started) / 1000, kib: rssKiB(server.pid!) }), 1000);
  let seed = 12345;
  const random = () => (seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648;
  await Promise.all(
    Array.from({ length: clients }, async () => {
      while (performance.now() < deadline) await step(random(), Math.floor(random() * 1e6));
    }),
  );
  clearInterval(sampler);
  const elapsed = (performance.now() - started) / 1000;

  server.kill('SIGTERM');
  const exitCode = await new Promise<number | null>((resolve) => server.on('exit', (code) => resolve(code)));
  const verify = await new Promise<string>((resolve) => {
    const v = spawn(process.execPath, [BIN, 'verify', '--db', db, '--json'], { stdio: ['ignore', 'pipe', 'inherit'] });
    let out = '';
    v.stdout.on('data', (d) => (out += d));
    v.on('exit', () => resolve(out));
  });
  const verified = JSON.parse(verify) as { ok: boolean; checked_versions: number };

  const sorted = [...latencies].sort((a, b) => a - b);
  const warm = rss.find((s) => s.t >= seconds / 10) ?? rss[0];
  const last = rss[rss.length - 1];
  const summary = {
    seconds: Number(elapsed.toFixed(1)),
    clients,
    requests: latencies.length,
    requests_per_s: Number((latencies.length / elapsed).toFixed(1)),
    by_kind: byKind,
    errors: errors.length,
    latency_ms: {
      p50: Number(percentile(sorted, 50).toFixed(2)),
      p99: Number(percentile(sorted, 99).toFixed(2)),
      max: Number(sorted[sorted.length - 1].toFixed(2)),
    },
    rss_mib: {
      after_warmup: Number((warm.kib / 1024).toFixed(1)),
      end: Number((last.kib / 1024).toFixed(1)),
      growth: Number(((last.kib - warm.kib) / 1024).toFixed(1)),
      peak: Number((Math.max(...rss.map((s) => s.kib)) / 1024).toFixed(1)),
    },
    versions_stored: verified.checked_versions,
    verify_ok: verified.ok,
    server_exit: exitCode,
    server_stderr: serverStderr.trim(),
  };
  console.log(JSON.stringify(summary, null, 2));
  for (const e of errors.slice(0, 20)) console.error(`error: ${e}`);
  rmSync(dir, { recursive: true, force: true });
  if (errors.length > 0 || !verified.ok) process.exitCode = 1;
}

await main();
