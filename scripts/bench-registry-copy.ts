/**
 * What `nkledger registry copy` costs (src/service/registry-copy.ts), beside a reference run side by side on the same
 * registry: `verify` of the source (the copy verifies both sides, so about twice that plus the writes is expected)
 * and `backup` (SQLite's page copy, which checks nothing). Builds a registry of invented Cauchy tables (MATERIALS
 * materials × VERSIONS versions of POINTS points, every second one approved) in a temporary folder; then times
 * SQLite → SQLite, and where PostgreSQL 15+ is installed SQLite → PostgreSQL and PostgreSQL → SQLite on a
 * throw-away server started as the tests start it (test/helpers/postgres.ts). In-process: no process start-up.
 *
 *   npx tsx scripts/bench-registry-copy.ts [--materials 50] [--versions 10] [--points 401] [--rounds 3]
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseArgs } from 'node:util';
import { copyRegistry } from '../src/service/registry-copy.ts';
import { approve, backup, createMaterial, importVersion, openRegistry, verifyRegistry } from '../src/service/registry.ts';
import { createDatabase, startPostgres } from '../test/helpers/postgres.ts';

const { values } = parseArgs({
  options: {
    materials: { type: 'string', default: '50' },
    versions: { type: 'string', default: '10' },
    points: { type: 'string', default: '401' },
    rounds: { type: 'string', default: '3' },
  },
});
const materials = Number(values.materials);
const versions = Number(values.versions);
const points = Number(values.points);
const rounds = Number(values.rounds);

const dir = mkdtempSync(join(tmpdir(), 'nkledger-bench-copy-'));
const source = join(dir, 'source.db');
let made = 0;
const fresh = () => join(dir, `copy-${made++}.db`);

/** Median wall time of `rounds` runs of `op`, in ms. */
async function median(op: () => Promise<unknown>): Promise<number> {
  const samples: number[] = [];
  for (let i = 0; i < rounds; i++) {
    const started = performance.now();
    await op();
    samples.push(performance.now() - started);
  }
  return samples.sort((a, b) => a - b)[Math.floor(samples.length / 2)];
}

try {
  const r = await openRegistry(source);
  for (let m = 0; m < materials; m++) {
    const slug = `film-${m}`;
    await createMaterial(r, { slug, name: `Film ${m}` }, 'ada');
    for (let v = 0; v < versions; v++) {
      const wavelengthNm = Array.from({ length: points }, (_, i) => 400 + (i * 400) / (points - 1));
      const a = 1.4 + m * 0.001 + v * 0.0001;
      const table = { wavelengthNm, n: wavelengthNm.map((w) => a + 0.004 / (w / 1000) ** 2), k: wavelengthNm.map(() => 0) };
      await importVersion(r, { slug, table }, 'ada');
      if (v % 2 === 0) await approve(r, `${slug}@${v + 1}`, 'bob');
    }
  }
  await r.close();
  console.log(`registry: ${materials} materials × ${versions} versions of ${points} points; median of ${rounds} runs`);

  const open = async () => openRegistry(source, { create: 'never', readonly: true });
  const verifyMs = await median(async () => {
    const s = await open();
    try {
      await verifyRegistry(s);
    } finally {
      await s.close();
    }
  });
  const backupMs = await median(async () => {
    const s = await open();
    try {
      await backup(s, fresh());
    } finally {
      await s.close();
    }
  });
  const copyMs = await median(() => copyRegistry(source, fresh()));
  const line = (what: string, ms: number) =>
    console.log(`${what.padEnd(34)} ${ms.toFixed(0).padStart(6)} ms  ${(ms / verifyMs).toFixed(2)} × verify`);
  line('verify (reference)', verifyMs);
  line('backup (page copy, no checks)', backupMs);
  line('registry copy SQLite → SQLite', copyMs);

  const server = await startPostgres();
  if ('missing' in server) console.log(`PostgreSQL: ${server.missing}`);
  else {
    try {
      const urls: string[] = [];
      line(
        'registry copy SQLite → PostgreSQL',
        await median(async () => {
          const url = await createDatabase(server.adminUrl, 'nkledger_bench_copy');
          urls.push(url);
          await copyRegistry(source, url);
        }),
      );
      line('registry copy PostgreSQL → SQLite', await median(() => copyRegistry(urls[0], fresh())));
    } finally {
      server.stop();
    }
  }
} finally {
  rmSync(dir, { recursive: true, force: true });
}
