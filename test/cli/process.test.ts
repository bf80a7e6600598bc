/**
 * The CLI as a real process, where the process itself matters: the built bin and `npx nkledger` start, exit codes
 * reach a shell, standard input comes through a pipe, and every command's module loads from the build.
 * (Closed pipes: pipe.test.ts; concurrent processes: registry-cli.test.ts and test/reliability.)
 */
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { COMMANDS } from '../../src/cli/commands/index.ts';
import { ROOT } from './run-cli.ts';

const BIN = `${ROOT}bin/nkledger.js`;
const shell = (script: string) => spawnSync('bash', ['-c', script], { cwd: ROOT, encoding: 'utf8', timeout: 60_000 });

describe('nkledger as a process', () => {
  it('exit codes reach the shell: 0 ok, 2 refused input, 3 a check that failed; errors on stderr without a stack', () => {
    const node = `"${process.execPath}" "${BIN}"`;
    const r = shell(
      [
        `${node} eval data/marrowick/sio2-thermal.csv --at 500 >/dev/null; echo "ok $?"`,
        `${node} eval data/marrowick/sio2-thermal.csv --at 100 2>/dev/null; echo "refused $?"`,
        `${node} kk test/fixtures/kk/lorentz-bump.csv >/dev/null; echo "inconsistent $?"`,
        `${node} no-such-command 2>/dev/null; echo "usage $?"`,
        `${node} inspect test/fixtures/import/bad/non-numeric.csv 2>&1 >/dev/null`,
      ].join('\n'),
    );
    expect(r.stdout).toBe(
      'ok 0\nrefused 2\ninconsistent 3\nusage 2\nnkledger: test/fixtures/import/bad/non-numeric.csv:3:2: "1.51x" is not a number [non-numeric]\n',
    );
  });

  it('reads "-" from a pipe', () => {
    const r = shell(`printf 'wavelength (nm),n,k\\n400,1.5,0.01\\n500,1.4,0\\n' | "${process.execPath}" "${BIN}" eval - --at 450 --json`);
    expect(r.status).toBe(0);
    expect(JSON.parse(r.stdout)).toMatchObject({ wavelength_nm: [450], n: [1.45], k: [0.005] });
  });

  it('`npx nkledger` from the checkout starts the build', () => {
    const r = spawnSync('npx', ['--no-install', 'nkledger', '--version'], { cwd: ROOT, encoding: 'utf8', timeout: 60_000 });
    expect(r.status).toBe(0);
    expect(r.stdout).toBe('0.1.0\n');
  });

  it('every command loads from the build and shows its help: from its own bundle and from dist/run.js (one process)', () => {
    // The process (dist/nkledger.js) imports the bundle its table names for the command; run.js holds them all, split.
    const table = JSON.parse(readFileSync(`${ROOT}dist/nkledger.js`, 'utf8').match(/BUNDLES = (\{.*\});/)![1]) as Record<string, string>;
    expect(Object.keys(table)).toEqual(COMMANDS.map((c) => c.name));
    const bundles = COMMANDS.map((c) => ({ name: c.name, file: `${ROOT}dist/${table[c.name]}` }));
    const script = `
      const out = [];
      const runs = [...${JSON.stringify(bundles)}, ...${JSON.stringify(COMMANDS.map((c) => ({ name: c.name, file: `${ROOT}dist/run.js` })))}];
      for (const { name, file } of runs) {
        const { run } = await import(file);
        let text = '';
        const code = await run([name, '--help'], { stdout: { write: (s) => (text += s) }, stderr: { write: (s) => (text += s) } });
        out.push({ name, file, code, usage: text.split('\\n')[0] });
      }
      process.stdout.write(JSON.stringify(out));`;
    const r = spawnSync(process.execPath, ['--input-type=module', '-e', script], { cwd: ROOT, encoding: 'utf8', timeout: 60_000 });
    expect(r.stderr).toBe('');
    const out = JSON.parse(r.stdout) as { name: string; file: string; code: number; usage: string }[];
    expect(out).toHaveLength(2 * COMMANDS.length);
    for (const { name, file, code, usage } of out) {
      expect(code, `${name} from ${file}`).toBe(0);
      expect(usage, `${name} from ${file}`).toMatch(new RegExp(`^Usage: nkledger ${name} `));
    }
  });
});
