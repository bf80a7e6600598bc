/**
 * Server-mode benchmark of the built CLI (issue: lab mode): wall time of whole `node bin/nkledger.js list`
 * processes against a registry of 1,000 materials, in file mode (--db) and in server mode (--server, the server
 * in a child process on 127.0.0.1), beside `node -e 0`, in interleaved rounds. Goal: `list` in server mode end to
 * end < 0.5 s; it should cost start-up plus one round trip.
 *
 * Run: npm run build && npx tsx scripts/bench-server-mode.ts [--runs 15] [--materials 1000]
 * Prints a Markdown table: median and lowest wall ms per case, and the median per-round difference between
 * server and file mode (the round trip and the JSON, without start-up).
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { openRegistry } from '../src/registry/open.ts';
import { appendAudit, writeTransaction } from '../src/registry/records.ts';
import { materials } from '../src/registry/schema.ts';

const ROOT = fileURLToPath(new URL('..', import.meta.url));
const BIN = join(ROOT, 'bin', 'nkledger.js');
const arg = (name: string, fallback: number) => {
  const i = process.argv.indexOf(name);
  return i > 0 ? Number(process.argv[i + 1]) : fallback;
};
const RUNS = arg('--runs', 15);
const MATERIALS = arg('--materials', 1000);

if (!existsSync(join(ROOT, 'dist', 'nkledger.js'))) {
  console.error('no build: run `npm run build` first');
  process.exit(4);
}

const dir = mkdtempSync(join(tmpdir(), 'nkledger-bench-server-'));
const db = join(dir, 'lab.db');
const registry = await openRegistry(db);
// One transaction for the whole set-up (createMaterial would commit 1,000 times); rows and audit events as it writes them.
await writeTransaction(registry, async () => {
  for (let i = 0; i < MATERIALS; i++) {
    const slug = `material-${String(i).padStart(4, '0')}`;
    const [row] = await registry.db
      .insert(materials)
      .values({
        slug,
        name: `Invented material ${i}`,
        description: 'bench',
        tags: '["bench"]',
        createdBy: 'bench',
        createdAt: new Date().toISOString(),
      })
      .returning();
    await appendAudit(registry, { actor: 'bench', action: 'material.create', materialId: row.id, material: slug, detail: { slug } });
  }
});
await registry.close();

const server = spawn(process.execPath, [BIN, 'serve', '--db', db, '--port', '0'], { stdio: ['ignore', 'pipe', 'inherit'] });
try {
  const url = await new Promise<string>((resolve, reject) => {
    let text = '';
    server.stdout.on('data', (d) => {
      text += d;
      const m = /at (http:\/\/127\.0\.0\.1:\d+)\//.exec(text);
      if (m) resolve(m[1]);
    });
    server.once('exit', () => reject(new Error(`the server exited: ${text}`)));
  });
  const env = { ...process.env, NKLEDGER_SERVER: '', NKLEDGER_TOKEN: '', NKLEDGER_DB: '' };
  const cases = [
    { name: '`node -e 0` (reference)', args: ['-e', '0'] },
    { name: `\`nkledger list --db\` (${MATERIALS} materials)`, args: [BIN, 'list', '--db', db] },
    { name: `\`nkledger list --server\` (${MATERIALS} materials)`, args: [BIN, 'list', '--server', url] },
  ];
  const times: number[][] = cases.map(() => []);
  for (let round = -1; round < RUNS; round++) {
    cases.forEach((c, i) => {
      const start = process.hrtime.bigint();
      const r = spawnSync(process.execPath, c.args, { env, encoding: 'utf8' });
      const ms = Number(process.hrtime.bigint() - start) / 1e6;
      if (r.status !== 0) throw new Error(`${c.name} exited ${r.status}: ${r.stderr}`);
      if (round >= 0) times[i].push(ms);
    });
  }
  const median = (v: number[]) => [...v].sort((a, b) => a - b)[Math.floor(v.length / 2)];
  console.log(`| case | median ms | lowest ms |\n| --- | ---: | ---: |`);
  cases.forEach((c, i) => console.log(`| ${c.name} | ${median(times[i]).toFixed(0)} | ${Math.min(...times[i]).toFixed(0)} |`));
  const extra = times[2].map((t, i) => t - times[1][i]);
  console.log(`\nserver mode − file mode, median per round: ${median(extra).toFixed(0)} ms (${RUNS} rounds, Node ${process.version})`);
} finally {
  server.kill('SIGTERM');
  await new Promise((resolve) => server.once('exit', resolve));
  rmSync(dir, { recursive: true, force: true });
}
