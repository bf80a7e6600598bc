/**
 * Start-up benchmark of the built CLI: wall time of whole `node bin/nkledger.js …` processes against `node -e 0`
 * (the cost of starting Node itself), run side by side in interleaved rounds so a change in machine load hits
 * every case alike. Targets (issue: start-up): `--help` ≤ 3× `node -e 0`; `eval REF --db …` ≤ 0.25 s wall.
 *
 * Run: npm run build && npx tsx scripts/bench-startup.ts [--runs 15]
 * It builds a temporary demo registry (src/service/demo-registry.ts; a few seconds), then times each case
 * `runs` times after one warm-up round and prints a Markdown table: median and lowest wall ms, the ratio of the
 * medians to `node -e 0`, and the median of the per-round ratios (the steadier figure on a loaded machine).
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { openRegistry } from '../src/registry/open.ts';
import { buildDemoRegistry } from '../src/service/demo-registry.ts';

const ROOT = fileURLToPath(new URL('..', import.meta.url));
const BIN = join(ROOT, 'bin', 'nkledger.js');
const runsArg = process.argv.indexOf('--runs');
const RUNS = runsArg > 0 ? Number(process.argv[runsArg + 1]) : 15;

if (!existsSync(join(ROOT, 'dist', 'nkledger.js'))) {
  console.error('no build: run `npm run build` first');
  process.exit(4);
}

const dir = mkdtempSync(join(tmpdir(), 'nkledger-bench-startup-'));
try {
  const db = join(dir, 'demo.db');
  const registry = await openRegistry(db);
  await buildDemoRegistry(registry, join(ROOT, 'data', 'marrowick'), join(dir, 'lock.json'));
  await registry.close();

  const cases: { name: string; args: string[] }[] = [
    { name: '`node -e 0` (reference)', args: ['-e', '0'] },
    { name: '`nkledger --help`', args: [BIN, '--help'] },
    { name: '`nkledger --version`', args: [BIN, '--version'] },
    { name: '`nkledger eval --help`', args: [BIN, 'eval', '--help'] },
    { name: '`nkledger eval sinx-pecvd@2 --at 405,632.8,1550 --db DB`', args: [BIN, 'eval', 'sinx-pecvd@2', '--at', '405,632.8,1550', '--db', db] },
    {
      name: '`nkledger eval data/marrowick/ito-sputtered.tsv --at 550`',
      args: [BIN, 'eval', join(ROOT, 'data/marrowick/ito-sputtered.tsv'), '--at', '550'],
    },
    { name: '`nkledger list --db DB`', args: [BIN, 'list', '--db', db] },
  ];

  const time = (args: string[]): number => {
    const t0 = performance.now();
    const r = spawnSync(process.execPath, args, { encoding: 'utf8' });
    const ms = performance.now() - t0;
    if (r.status !== 0) throw new Error(`node ${args.join(' ')} exited ${r.status}: ${r.stderr}`);
    return ms;
  };

  for (const c of cases) time(c.args); // warm-up: file cache, compile cache
  const samples = cases.map(() => [] as number[]);
  for (let round = 0; round < RUNS; round++) cases.forEach((c, i) => samples[i].push(time(c.args)));

  const median = (xs: number[]) => {
    const s = [...xs].sort((a, b) => a - b);
    return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
  };
  const ref = samples[0];
  console.log(`Node ${process.version}, ${RUNS} rounds (interleaved) after one warm-up; wall time of the whole process.\n`);
  console.log('| case | median ms | lowest ms | ratio of medians to node -e 0 | median of per-round ratios |');
  console.log('| --- | ---: | ---: | ---: | ---: |');
  cases.forEach((c, i) => {
    const perRound = samples[i].map((ms, r) => ms / ref[r]);
    console.log(
      `| ${c.name} | ${median(samples[i]).toFixed(0)} | ${Math.min(...samples[i]).toFixed(0)} | ${(median(samples[i]) / median(ref)).toFixed(2)} | ${median(perRound).toFixed(2)} |`,
    );
  });
} finally {
  rmSync(dir, { recursive: true, force: true });
}
