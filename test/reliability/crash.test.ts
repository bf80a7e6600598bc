/**
 * Crash safety: a writer process (crash-writer.ts) imports, approves, retires and withdraws versions in one
 * database as fast as it can and is killed with SIGKILL at seeded random moments, KILLS times; some kills
 * land while it opens the registry (the first one while it migrates a brand-new file). After every kill:
 * `PRAGMA integrity_check` is ok, no version is partial, numbers have no holes or duplicates, every hash
 * verifies, the audit log matches the versions, and every write the writer acknowledged is there.
 * (Atomic commit of SQLite transactions under process death: sqlite.org/atomiccommit.html.)
 */
import { spawn, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { afterAll, describe, expect, it } from 'vitest';
import { checkRegistryFile } from './invariants.ts';

export const KILLS = 30;
/** Writers loading ahead of their turn. */
const POOL = 3;
const WRITER = new URL('./crash-writer.ts', import.meta.url).pathname;
const dir = mkdtempSync(join(tmpdir(), 'nkledger-crash-'));
const db = join(dir, 'crash.db');
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** mulberry32, seeded: the kill moments are the same on every run. */
function prng(seed: number): () => number {
  return () => {
    seed = (seed + 0x6d2b79f5) >>> 0;
    let t = seed;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

interface Writer {
  child: ChildProcessWithoutNullStreams;
  lines: string[];
  /** Resolves when the writer printed `line`. */
  waitFor(line: string): Promise<void>;
  exited: Promise<NodeJS.Signals | null>;
  stderr: () => string;
}

function startWriter(seed: number): Writer {
  const child = spawn(process.execPath, ['--import', 'tsx', WRITER, db, String(seed)], { stdio: 'pipe' });
  const lines: string[] = [];
  const waiters = new Map<string, () => void>();
  let err = '';
  child.stderr.on('data', (d) => (err += d));
  createInterface({ input: child.stdout }).on('line', (line) => {
    lines.push(line);
    waiters.get(line)?.();
  });
  const exited = new Promise<NodeJS.Signals | null>((resolve) => child.on('exit', (_code, signal) => resolve(signal)));
  return {
    child,
    lines,
    waitFor: (line) => (lines.includes(line) ? Promise.resolve() : new Promise((resolve) => waiters.set(line, resolve))),
    exited,
    stderr: () => err,
  };
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('SIGKILL in the middle of a stream of writes', { timeout: 120_000 }, () => {
  it(`${KILLS} kills at random moments leave a sound registry that holds every acknowledged write`, async () => {
    const random = prng(20240501);
    /** Acknowledged writes: ref → sha256, and the lifecycle state each ref reached. */
    const acknowledged = new Map<string, string>();
    const state = new Map<string, string>();
    let killsWhileOpening = 0;
    let unacknowledged = 0;
    // Writers load their modules ahead (slow), a few at a time, and each waits for "go": one writes at a time.
    const pool = Array.from({ length: Math.min(POOL, KILLS) }, (_, i) => startWriter(i + 1));
    for (let kill = 1; kill <= KILLS; kill++) {
      const w = pool.shift()!;
      if (kill + pool.length < KILLS) pool.push(startWriter(kill + pool.length + 1));
      await w.waitFor('loaded');
      w.child.stdin.write('go\n');
      // One kill in five lands in the first milliseconds (opening, migrating); the rest while writing.
      const early = kill === 1 || random() < 0.2;
      if (early) {
        await sleep(random() * 40);
        if (!w.lines.includes('ready')) killsWhileOpening++;
      } else {
        await w.waitFor('ready');
        await sleep(20 + random() * 300);
      }
      w.child.kill('SIGKILL');
      expect(await w.exited).toBe('SIGKILL');
      expect(w.stderr()).toBe('');

      for (const line of w.lines) {
        const [what, ref, sha] = line.split(' ');
        if (what === 'import') {
          acknowledged.set(ref, sha);
          state.set(ref, 'draft');
        } else if (what === 'approve') state.set(ref, 'approved');
        else if (what === 'retire') state.set(ref, 'retired');
        else if (what === 'withdraw') state.set(ref, 'withdrawn');
      }

      const { problems, versions } = await checkRegistryFile(db);
      expect(problems, `after kill ${kill}`).toEqual([]);
      // Versions committed but killed before the writer could print them: the kill hit right at a commit.
      unacknowledged = [...versions.keys()].filter((ref) => !acknowledged.has(ref)).length;
      for (const [ref, sha] of acknowledged) {
        const stored = versions.get(ref);
        expect(stored?.sha256, `${ref} acknowledged before kill ${kill}`).toBe(sha);
        // A later transition may have committed without being acknowledged (killed before the print), never the reverse.
        const order = ['draft', 'approved', 'retired'];
        const want = state.get(ref)!;
        if (want === 'withdrawn') expect(stored!.status).toBe('withdrawn');
        else if (stored!.status !== 'withdrawn') expect(order.indexOf(stored!.status)).toBeGreaterThanOrEqual(order.indexOf(want));
        else expect(want).toBe('draft');
      }
    }
    const versionsTotal = (await checkRegistryFile(db)).versions.size;
    console.log(
      `crash test: ${KILLS} kills (${killsWhileOpening} while opening), ${acknowledged.size} acknowledged imports, all present; ${unacknowledged} more committed without acknowledgement; ${versionsTotal} versions`,
    );
    expect(acknowledged.size).toBeGreaterThan(KILLS);
  });
});
