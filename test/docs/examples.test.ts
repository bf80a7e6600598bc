/**
 * Every command example in README.md and docs/*.md runs and exits 0 (or the `(exit N)` its comment states), in a
 * scratch folder holding data/ and test/ of the repository and a fresh demo registry at .demo/nkledger.db (built
 * here by src/service/demo-registry.ts; it is also NKLEDGER_DB). Examples of one document run in order, so a
 * later one sees what an earlier one wrote. Plain `nkledger …` lines run in-process (run(argv, io)); lines that
 * need a shell (pipes, variables, &&) run in bash with `nkledger` and `npx nkledger` leading to bin/nkledger.js.
 * Lines that cannot run unattended carry a marker (examples.ts MARKERS, listed in DEVELOPERS.md).
 */
import { spawnSync } from 'node:child_process';
import { chmodSync, existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openRegistry } from '../../src/registry/open.ts';
import { buildDemoRegistry } from '../../src/service/demo-registry.ts';
import { ROOT, runCli } from '../cli/run-cli.ts';
import { extractExamples, MARKERS, type DocExample } from './examples.ts';

const DOCS = [
  'README.md',
  ...(existsSync(join(ROOT, 'docs'))
    ? readdirSync(join(ROOT, 'docs'))
        .filter((f) => f.endsWith('.md'))
        .map((f) => `docs/${f}`)
    : []),
];
const examples = DOCS.map((file) => ({ file, examples: extractExamples(file, readFileSync(join(ROOT, file), 'utf8')) }));

/**
 * Examples that fail today because of a defect being fixed elsewhere: command → the output that shows it. The
 * test checks they still fail that way, so the entry must go when the defect is fixed. Keep this list empty
 * otherwise: a failing example is fixed in the document or in the code.
 */
const KNOWN_FAILURES: Record<string, { output: RegExp; why: string }> = {};

let sandbox: string;
let env: Record<string, string>;
const startDir = process.cwd();

beforeAll(async () => {
  sandbox = mkdtempSync(join(tmpdir(), 'nkledger-docs-'));
  for (const dir of ['data', 'test']) symlinkSync(join(ROOT, dir), join(sandbox, dir));
  mkdirSync(join(sandbox, '.demo'));
  const db = join(sandbox, '.demo', 'nkledger.db');
  const registry = await openRegistry(db);
  try {
    await buildDemoRegistry(registry, join(ROOT, 'data', 'marrowick'), join(sandbox, '.demo', 'design-lock.json'));
  } finally {
    await registry.close();
  }
  const bin = join(sandbox, '.bin');
  mkdirSync(bin);
  const node = `"${process.execPath}" "${join(ROOT, 'bin', 'nkledger.js')}"`;
  writeFileSync(join(bin, 'nkledger'), `#!/bin/sh\nexec ${node} "$@"\n`);
  writeFileSync(
    join(bin, 'npx'),
    `#!/bin/sh\n[ "$1" = nkledger ] || { echo "doc test: only npx nkledger runs here" >&2; exit 127; }\nshift\nexec ${node} "$@"\n`,
  );
  for (const f of ['nkledger', 'npx']) chmodSync(join(bin, f), 0o755);
  env = { NKLEDGER_DB: db, NKLEDGER_USER: 'doc-reader', PATH: `${bin}:${process.env.PATH}` };
  // Relative paths in the examples resolve in the scratch folder (never the checkout).
  process.chdir(sandbox);
}, 120_000);

afterAll(() => {
  process.chdir(startDir);
  rmSync(sandbox, { recursive: true, force: true });
});

async function runExample(ex: DocExample): Promise<{ code: number | null; output: string }> {
  if (ex.argv && (ex.argv[0] === 'nkledger' || (ex.argv[0] === 'npx' && ex.argv[1] === 'nkledger'))) {
    const r = await runCli(ex.argv.slice(ex.argv[0] === 'npx' ? 2 : 1), { env });
    return { code: r.code, output: r.stdout + r.stderr };
  }
  const r = spawnSync('bash', ['-c', ex.command], { cwd: sandbox, encoding: 'utf8', env: { ...process.env, ...env }, timeout: 60_000 });
  return { code: r.status, output: r.stdout + r.stderr };
}

describe('command examples of the documentation', { timeout: 240_000 }, () => {
  for (const { file, examples: list } of examples) {
    it(`${file}: every example runs and exits as stated (${list.length} examples)`, async () => {
      const failures: string[] = [];
      for (const ex of list) {
        if (ex.marker) continue;
        const { code, output } = await runExample(ex);
        const known = KNOWN_FAILURES[ex.command];
        if (known) {
          if (code === ex.expectedExit || !known.output.test(output))
            failures.push(`${file}:${ex.line}: \`${ex.command}\` no longer fails as KNOWN_FAILURES says (${known.why}): remove the entry`);
        } else if (code !== ex.expectedExit)
          failures.push(`${file}:${ex.line}: \`${ex.command}\` exited ${code}, expected ${ex.expectedExit}\n${output.slice(0, 600)}`);
      }
      expect(failures.join('\n\n')).toBe('');
    });
  }

  it('README has examples that run, and every skipped one names its reason', () => {
    // README is the front door (its tour); the docs/ pages carry the other examples, each page run above
    const readme = examples.find((e) => e.file === 'README.md')!.examples;
    expect(readme.filter((e) => !e.marker).length).toBeGreaterThanOrEqual(12);
    for (const ex of examples.flatMap((e) => e.examples)) if (ex.marker) expect(Object.keys(MARKERS)).toContain(ex.marker);
  });
});
