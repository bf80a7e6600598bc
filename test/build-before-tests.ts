/**
 * vitest globalSetup: build dist/ from the current sources before any test runs, so the tests that start
 * `node bin/nkledger.js` as a real process never run an older build. `--if-changed` skips the build when
 * dist/ was made from exactly these sources (a digest of them is kept in dist/), as after `npm install`.
 */
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

export default function setup(): void {
  const script = fileURLToPath(new URL('../scripts/build.js', import.meta.url));
  const r = spawnSync(process.execPath, [script, '--if-changed'], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`build failed (${script}):\n${r.stdout}${r.stderr}`);
}
