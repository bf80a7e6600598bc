/**
 * The code-cached command bundles (src/cli/code-cache.ts, scripts/build.js): the build's cache is one this Node
 * accepts, a missing or foreign cache only costs speed, and the code runs from the bundle's own file.
 * (How much start-up it saves is measured by scripts/bench-startup.ts, not here.)
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import Module from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Script } from 'node:vm';
import { afterAll, describe, expect, it } from 'vitest';
import { ROOT, runCli } from './run-cli.ts';

const DIST = join(ROOT, 'dist');
const table = (name: string) =>
  JSON.parse(readFileSync(join(DIST, 'nkledger.js'), 'utf8').match(new RegExp(`${name} = (\\{.*\\});`))![1]) as Record<string, string>;
const BUNDLES = table('BUNDLES');
const CACHES = table('CACHES');
const scratch = mkdtempSync(join(tmpdir(), 'nkledger-code-cache-test-'));
afterAll(() => rmSync(scratch, { recursive: true, force: true }));

/** Run `node -e` with the build's own loader (dist/cli-code-cache.js) and return what the child prints. */
function withLoader(body: string): { status: number | null; stdout: string; stderr: string } {
  const script = `const { runCachedBundle } = await import(${JSON.stringify(join(DIST, 'cli-code-cache.js'))});\n${body}`;
  return spawnSync(process.execPath, ['--input-type=module', '-e', script], { cwd: ROOT, encoding: 'utf8', timeout: 60_000 });
}

describe('code-cached command bundles', () => {
  it('eval is one CommonJS bundle with a code cache named after its content', () => {
    expect(BUNDLES.eval).toBe('./cmd-eval.cjs');
    expect(CACHES.eval).toMatch(/^\.\/cmd-eval-[0-9a-f]{16}\.v8cache$/);
    expect(Object.keys(CACHES)).toEqual(['eval']);
  });

  it('V8 in this Node accepts the cache the build wrote', () => {
    const file = join(DIST, BUNDLES.eval);
    const script = new Script(Module.wrap(readFileSync(file, 'utf8')), {
      filename: file,
      cachedData: readFileSync(join(DIST, CACHES.eval)),
    });
    expect(script.cachedDataRejected).toBe(false);
  });

  it('runs the same without a cache, or with one V8 refuses', () => {
    const garbage = join(scratch, 'garbage.v8cache');
    writeFileSync(garbage, Buffer.alloc(4096, 7));
    const args = JSON.stringify(['eval', 'data/marrowick/sio2-thermal.csv', '--at', '500', '--json']);
    const bundle = JSON.stringify(join(DIST, BUNDLES.eval));
    const outputs = [join(DIST, CACHES.eval), join(scratch, 'none.v8cache'), garbage].map((cache) => {
      const r = withLoader(`
        let text = '';
        const code = await runCachedBundle(${bundle}, ${JSON.stringify(cache)}).run(${args}, { stdout: { write: (s) => (text += s) }, stderr: { write() {} } });
        process.stdout.write(JSON.stringify({ code, text }));`);
      expect(r.stderr).toBe('');
      return JSON.parse(r.stdout) as { code: number; text: string };
    });
    expect(outputs[0].code).toBe(0);
    expect(JSON.parse(outputs[0].text)).toMatchObject({ wavelength_nm: [500] });
    expect(outputs[1]).toEqual(outputs[0]);
    expect(outputs[2]).toEqual(outputs[0]);
  });

  it('reads a registry version (migrations found relative to the bundle) and names its own file in stack traces', async () => {
    const db = join(scratch, 'registry.db');
    const env = { NKLEDGER_USER: 'metrology-a' };
    expect((await runCli(['material', 'add', 'sio2-film', '--name', 'Thermal oxide', '--db', db], { env })).code).toBe(0);
    expect(
      (await runCli(['import', 'data/marrowick/sio2-thermal.csv', '--material', 'sio2-film', '--fit', 'cauchy', '--db', db], { env })).code,
    ).toBe(0);
    const inProcess = await runCli(['eval', 'sio2-film@1', '--at', '405,632.8', '--json', '--db', db]);
    expect(inProcess.code).toBe(0);
    const r = withLoader(`
      const bundle = runCachedBundle(${JSON.stringify(join(DIST, BUNDLES.eval))}, ${JSON.stringify(join(DIST, CACHES.eval))});
      let text = '';
      const code = await bundle.run(['eval', 'sio2-film@1', '--at', '405,632.8', '--json', '--db', ${JSON.stringify(db)}], { stdout: { write: (s) => (text += s) }, stderr: { write() {} } });
      // A bug inside the bundle (run given no argument list): exit 1, and its stack with NKLEDGER_DEBUG set.
      let stack = '';
      await bundle.run(null, { stderr: { write: (s) => (stack += s) }, env: { NKLEDGER_DEBUG: '1' } });
      process.stdout.write(JSON.stringify({ code, text, stack }));`);
    expect(r.stderr).toBe('');
    const out = JSON.parse(r.stdout) as { code: number; text: string; stack: string };
    expect(out.code).toBe(0);
    expect(JSON.parse(out.text)).toEqual(JSON.parse(inProcess.stdout));
    // The build compiles the cache under the bundle's path in dist/, not the folder it builds in.
    expect(out.stack).toMatch(/internal error/);
    expect(out.stack).toContain(`${join(DIST, 'cmd-eval.cjs')}:`);
    expect(out.stack).not.toMatch(/dist\.building-/);
  });
});
