/**
 * A writer for the crash and backup tests (`node --import tsx crash-writer.ts DB SEED [PAUSE_MS]`): loads its modules,
 * prints "loaded", waits for "go" on stdin (so the parent can start the next writer while the previous one
 * still runs), opens the registry, then writes forever — imports of 200-row tables, approvals, retirements
 * and withdrawals on two materials — printing one line per write only after it committed:
 * `import slug@N sha256`, `approve slug@N`, `retire slug@N`, `withdraw slug@N`. The parent SIGKILLs it.
 */
import { createInterface } from 'node:readline';
import { ConflictError } from '../../src/errors.ts';
import { openRegistry } from '../../src/registry/open.ts';
import { createMaterial } from '../../src/service/materials.ts';
import { importVersion } from '../../src/service/versions.ts';
import { approve, retire, withdraw } from '../../src/service/lifecycle.ts';

const [db, seedText, pauseText] = process.argv.slice(2);
/** Optional pause between writes, ms (the backup test throttles its writers; the crash test does not). */
const pauseMs = Number(pauseText ?? 0);
let seed = Number(seedText) >>> 0;
/** mulberry32: a small seeded PRNG, so each writer's content is distinct and reproducible. */
function random(): number {
  seed = (seed + 0x6d2b79f5) >>> 0;
  let t = seed;
  t = Math.imul(t ^ (t >>> 15), t | 1);
  t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
  return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
}

const SLUGS = ['crash-a', 'crash-b'];
const ROWS = 200;

/** An invented Cauchy-like table with a random offset (not a measurement): 400…799 nm, 200 rows. */
function table() {
  const a = 1.4 + random() * 0.6;
  const kScale = random() * 0.01;
  const wavelengthNm = Array.from({ length: ROWS }, (_, i) => 400 + 2 * i);
  return {
    wavelengthNm,
    n: wavelengthNm.map((w) => a + 0.004 / (w / 1000) ** 2),
    k: wavelengthNm.map((w) => kScale * (400 / w) ** 4),
  };
}

const say = (line: string) => process.stdout.write(`${line}\n`);

async function main(): Promise<void> {
  say('loaded');
  // Stdin closing (the parent is gone) ends the writer, before or after "go": it never outlives its test.
  process.stdin.on('end', () => process.exit(0));
  await new Promise<void>((resolve) => {
    createInterface({ input: process.stdin }).on('line', (line) => line.trim() === 'go' && resolve());
  });

  const registry = await openRegistry(db);
  for (const slug of SLUGS) {
    try {
      await createMaterial(registry, { slug, name: `Crash test ${slug}` }, 'writer');
      say(`material ${slug}`);
    } catch (err) {
      if (!(err instanceof ConflictError)) throw err;
    }
  }
  say('ready');
  const drafts: string[] = [];
  const approved: string[] = [];
  for (let i = 0; ; i++) {
    // Yield to the event loop now and then so the stdin 'end' above can be noticed.
    if (pauseMs > 0) await new Promise((r) => setTimeout(r, pauseMs));
    else if (i % 20 === 19) await new Promise((r) => setImmediate(r));
    const slug = SLUGS[Math.floor(random() * SLUGS.length)];
    const v = await importVersion(registry, { slug, table: table(), provenance: { notes: `writer seed ${seedText}` } }, 'writer');
    say(`import ${v.ref} ${v.sha256}`);
    drafts.push(v.ref);
    const r = random();
    if (r < 0.4 && drafts.length > 0) {
      const ref = drafts.shift()!;
      await approve(registry, ref, 'approver');
      say(`approve ${ref}`);
      approved.push(ref);
    } else if (r < 0.5 && drafts.length > 0) {
      const ref = drafts.shift()!;
      await withdraw(registry, ref, 'writer', 'crash test');
      say(`withdraw ${ref}`);
    } else if (r < 0.6 && approved.length > 0) {
      const ref = approved.shift()!;
      await retire(registry, ref, 'superseded in the crash test', 'approver');
      say(`retire ${ref}`);
    }
  }
}

await main();
