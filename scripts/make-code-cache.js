#!/usr/bin/env node
/**
 * Build step (scripts/build.js runs it in a child process, so the cache matches Node's default flags): warm up
 * the fresh bundle `DIR/cmd-MODULE.cjs` on the calls its command is typically started for and write V8's code
 * cache of it to DIR/CACHE (src/cli/code-cache.ts). The code is compiled under the name FINAL, the path the
 * bundle will be run from.
 *
 * Usage: node scripts/make-code-cache.js DIR COMMAND MODULE CACHE FINAL
 *
 * For `eval`: its help, a registry version (in a scratch registry made here with the build's own run.js:
 * one material, one import of the demo table data/marrowick/sio2-thermal.csv with a Cauchy fit) and a table
 * file. Any other command is warmed up on its help.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const [dir, command, module, cacheName, final] = process.argv.slice(2);
const TABLE = fileURLToPath(new URL('../data/marrowick/sio2-thermal.csv', import.meta.url));

const { produceCodeCache } = await import(pathToFileURL(join(dir, 'cli-code-cache.js')).href);
const scratch = mkdtempSync(join(tmpdir(), 'nkledger-code-cache-'));
try {
  const runs = [[command, '--help']];
  if (command === 'eval') {
    const { run } = await import(pathToFileURL(join(dir, 'run.js')).href);
    const db = join(scratch, 'warm-up.db');
    const quiet = { stdout: { write() {} }, stderr: { write() {} }, env: { NKLEDGER_USER: 'build' } };
    for (const argv of [
      ['material', 'add', 'warm-up', '--name', 'Warm-up', '--db', db],
      ['import', TABLE, '--material', 'warm-up', '--fit', 'cauchy', '--db', db],
    ]) {
      const code = await run(argv, quiet);
      if (code !== 0) throw new Error(`${argv.join(' ')} exited ${code}`);
    }
    runs.push(['eval', 'warm-up@1', '--at', '405,632.8,1550', '--db', db], ['eval', TABLE, '--at', '550']);
  }
  await produceCodeCache(join(dir, `cmd-${module}.cjs`), join(dir, cacheName), runs, final);
} finally {
  rmSync(scratch, { recursive: true, force: true });
}
