/**
 * The CLI on instrument exports and the commands issue 12 added or changed: the preamble and implausible-range
 * refusals as a user sees them, several files in one import, kk/fit without a k column, eval --at-unit and
 * --extrapolate, lock outdated --check, material edit, list --search. Fixtures: INVENTED Marrowick Optics data.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from './run-cli.ts';

const FIX = new URL('../fixtures/import/', import.meta.url).pathname;
let dir: string;
let db: string;

async function run(args: string[], user = 'ada') {
  const r = await runCli([...args, '--db', db], { env: { NKLEDGER_USER: user, NKLEDGER_DB: '' } });
  return { code: r.code, out: r.stdout, err: r.stderr };
}

/** 21 rows of n = 1.45 + offset + 0.0036/λ² (λ in µm) under a preamble: INVENTED numbers. */
function writeExport(name: string, offset: number, withK = true): string {
  const rows = Array.from({ length: 21 }, (_, i) => 400 + 20 * i).map(
    (w) => `${w},${(1.45 + offset + 0.0036 / (w / 1000) ** 2).toFixed(6)}${withK ? ',0' : ''}`,
  );
  const path = join(dir, name);
  writeFileSync(path, ['Sample: TA-0412', 'Operator: R. Okafor', `Wavelength (nm),n${withK ? ',k' : ''}`, ...rows, ''].join('\n'));
  return path;
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'nkledger-exports-'));
  db = join(dir, 'lab.db');
  await run(['material', 'add', 'ta2o5', '--name', 'Ta2O5', '--tag', 'oxide']);
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('instrument exports from the command line', { timeout: 240_000 }, () => {
  it('refuses µm numbers under a nm header with the flag that reads them, exit 2', async () => {
    const r = await run(['inspect', join(FIX, 'bad/um-under-nm-header.csv')]);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/um-under-nm-header\.csv:4:1: .*looks like µm: use --input-unit um or --allow-any-range \[implausible-range\]/);
    expect((await run(['inspect', join(FIX, 'bad/um-under-nm-header.csv'), '--input-unit', 'um'])).code).toBe(0);
  });

  it('imports several files in one go, each with its preamble; a bad one stores none', async () => {
    const bad = join(FIX, 'bad/um-under-nm-header.csv');
    const refused = await run(['import', writeExport('w1.csv', 0), bad, '--material', 'ta2o5', '--no-kk']);
    expect(refused.code).toBe(2);
    expect(JSON.parse((await run(['history', 'ta2o5', '--json'])).out).versions).toHaveLength(0);
    const ok = await run(['import', writeExport('w1.csv', 0), writeExport('w2.csv', 0.01), '--material', 'ta2o5', '--no-kk', '--json']);
    expect(ok.code).toBe(0);
    const stored = JSON.parse(ok.out);
    expect(stored.map((s: { ref: string }) => s.ref)).toEqual(['ta2o5@1', 'ta2o5@2']);
    expect(stored[1]).toMatchObject({ source_file: join(dir, 'w2.csv'), preamble: ['Sample: TA-0412', 'Operator: R. Okafor'] });
    const shown = await run(['show', 'ta2o5@2']);
    expect(shown.out).toMatch(/preamble \(the lines above the file's header\)\n {4}Sample: TA-0412/);
  });

  it('kk and fit of a file without k say so', async () => {
    const file = writeExport('n-only.csv', 0, false);
    const kk = await run(['kk', file, '--json']);
    expect(kk.code).toBe(0);
    expect(JSON.parse(kk.out)).toMatchObject({ verdict: 'uninformative', reason: 'no k column' });
    const fit = await run(['fit', file, '--model', 'tauc-lorentz', '--json']);
    expect(fit.err).toMatch(/note: no k column: the tauc-lorentz fit uses n only/);
    if (fit.code === 0) expect(JSON.parse(fit.out)).toMatchObject({ options: { target: 'n' }, notices: [expect.stringMatching(/no k column/)] });
  });

  it('eval in eV and beyond a model range, marked', async () => {
    const e = await run(['eval', join(FIX, 'good/export-preamble.csv'), '--at', '2.5', '--at-unit', 'eV', '--json']);
    expect(JSON.parse(e.out)).toMatchObject({ energy_eV: [2.5], wavelength_nm: [1239.841984 / 2.5] });
    const text = await run(['eval', join(FIX, 'good/basic-nm.csv'), '--at', '600']);
    expect(text.out).toMatch(/600\s+1\.50000\s+0\n/); // k = 0 prints as 0
    await run(['import', writeExport('fit.csv', 0.03), '--material', 'ta2o5', '--fit', 'cauchy', '--no-kk']);
    const x = await run(['eval', 'ta2o5@3', '--at', '350,500', '--extrapolate', '--json']);
    expect(x.code).toBe(0);
    expect(JSON.parse(x.out)).toMatchObject({ extrapolated: [true, false], warnings: [expect.stringMatching(/1 value\(s\) extrapolated/)] });
    expect((await run(['eval', 'ta2o5@3', '--at', '350'])).err).toMatch(/outside the validity range.*: use --extrapolate \[outside-validity-range\]/);
  });

  it('lock outdated --check exits 3 when a newer version is approved', async () => {
    const lock = join(dir, 'd.nklock.json');
    await run(['approve', 'ta2o5@1'], 'bob');
    await run(['lock', 'add', 'ta2o5@1', '--lock', lock]);
    expect((await run(['lock', 'outdated', '--lock', lock, '--check'])).code).toBe(0);
    await run(['approve', 'ta2o5@2'], 'bob');
    expect((await run(['lock', 'outdated', '--lock', lock, '--check'])).code).toBe(3);
    expect((await run(['lock', 'outdated', '--lock', lock])).code).toBe(0);
  });

  it('material edit changes name and tags (audit-logged); list --search finds it', async () => {
    const e = await run(['material', 'edit', 'ta2o5', '--name', 'Ta2O5, ion-assisted', '--tag', 'iad', '--untag', 'oxide', '--as', 'cy']);
    expect(e.out).toMatch(/edited ta2o5: name, tags changed/);
    expect(JSON.parse((await run(['list', '--search', 'ion-assisted', '--json'])).out).map((m: { slug: string }) => m.slug)).toEqual(['ta2o5']);
    expect(JSON.parse((await run(['list', '--search', 'oxide', '--json'])).out)).toEqual([]);
    const audit = JSON.parse((await run(['history', 'ta2o5', '--json'])).out).audit;
    expect(audit.at(-1)).toMatchObject({ actor: 'cy', action: 'material.edit' });
  });
});
