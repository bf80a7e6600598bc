/** Output piped into a reader that stops early (`| head`) ends the command quietly with exit 0, no stack trace. */
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';

const BIN = new URL('../../bin/nkledger.js', import.meta.url).pathname;
const ROOT = new URL('../../', import.meta.url).pathname;

describe('a closed pipe', { timeout: 60_000 }, () => {
  it('eval of 65,000 wavelengths into head -2: exit 0, nothing on stderr but the import warning', () => {
    const script = `"${process.execPath}" "${BIN}" eval data/marrowick/a-si-h.txt --at 300:1600:0.02 | head -2; echo "status \${PIPESTATUS[0]}"`;
    const r = spawnSync('bash', ['-c', script], { cwd: ROOT, encoding: 'utf8' });
    expect(r.stdout).toMatch(/^wavelength \(nm\) +n +k\n-+ +-+ +-+\nstatus 0\n$/);
    expect(r.stderr).not.toMatch(/EPIPE|\n\s+at /);
  });
});
