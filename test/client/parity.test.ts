/**
 * The acceptance test of server mode: one script of registry commands, run in file mode (the CLI on its own copy
 * of the starting registry, acting as NKLEDGER_USER) and in server mode (the CLI against a server on another copy,
 * acting through each person's token). Every command must give the same exit code, stdout and stderr, once
 * times, audit-chain head hashes and the scratch folder are masked. (`token list` is not in the script: server mode
 * uses the tokens, so their "last used" differs by design; test/client/admin.test.ts covers the token commands.)
 */
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli, type CliResult } from '../cli/run-cli.ts';
import { startLab, type Lab, type Person } from './lab-server.ts';

const D = 'data/marrowick';

/** [who, arguments, standard input]; `{work}` is the mode's scratch folder. */
const SCRIPT: [Person, string[], string?][] = [
  ['alice', ['material', 'add', 'sinx', '--name', 'PECVD SiNx', '--tag', 'nitride']],
  ['alice', ['material', 'add', 'sio2', '--name', 'Thermal oxide', '--description', 'wet oxide', '--json']],
  ['alice', ['material', 'add', 'bump', '--name', 'Invented inconsistent table']],
  ['alice', ['material', 'add', 'sinx', '--name', 'again']],
  ['alice', ['material', 'add', 'Bad_Slug', '--name', 'refused']],
  ['alice', ['eval', 'no-such-thing', '--at', '500']],
  [
    'alice',
    [
      'import',
      `${D}/sinx-pecvd-recipe-a.csv`,
      '--material',
      'sinx',
      '--fit',
      'tauc-lorentz',
      '--meta',
      'instrument=MO-SE 640',
      'angles=65,70,75',
      'measured_on=2024-04-18',
      '--note',
      'wafer 7',
    ],
  ],
  ['alice', ['import', `${D}/sio2-thermal.csv`, '--material', 'sio2', '--fit', 'sellmeier', '--terms', '1', '--range', '300:1600', '--json']],
  ['alice', ['import', `${D}/sinx-pecvd-recipe-a.csv`, '--material', 'sinx', '--fit', 'tauc-lorentz']],
  ['alice', ['import', 'test/fixtures/import/bad/non-numeric.csv', '--material', 'sinx']],
  ['alice', ['import', `${D}/sinx-pecvd-recipe-b.csv`, '--material', 'sinx', '--fix', 'A=1']],
  ['alice', ['import', `${D}/sinx-pecvd-recipe-b.csv`, '--material', 'sinx', '--no-kk']],
  ['alice', ['import', 'test/fixtures/kk/lorentz-bump.csv', '--material', 'bump']],
  ['bob', ['review']],
  ['bob', ['review', '--json']],
  ['bob', ['approve', 'bump@1']],
  ['bob', ['approve', 'bump@1', '--json']],
  ['bob', ['approve', 'bump@1', '--accept-warnings', 'invented test table: the step is the point']],
  ['alice', ['review', '--long']],
  ['alice', ['material', 'add', 'coat', '--name', 'Coating materials']],
  ['alice', ['import', `${D}/al2o3-ald.csv`, `${D}/mgf2-evaporated.csv`, '--material', 'coat', '--meta', 'operator=alice', '--json']],
  ['alice', ['import', `${D}/ito-sputtered.tsv`, 'test/fixtures/import/bad/n-negative.csv', '--material', 'coat']],
  [
    'alice',
    ['import', '-', '--material', 'coat', '--columns', 'wavelength,n,k', '--input-unit', 'nm', '--fit', 'cauchy'],
    readFileSync('test/fixtures/import/good/headerless.csv', 'utf8'),
  ],
  [
    'alice',
    ['import', '-', '--material', 'coat', '--columns', 'wavelength,n,k', '--no-kk', '--meta', 'sample=W3'],
    readFileSync('test/fixtures/import/good/headerless.csv', 'utf8'),
  ],
  ['alice', ['import', 'test/fixtures/import/good/export-preamble.csv', '--material', 'coat', '--no-kk', '--json']],
  ['alice', ['history', 'coat']],
  ['alice', ['approve', 'sinx@1']],
  ['bob', ['approve', 'sinx@1']],
  ['bob', ['approve', 'sio2@1', '--json']],
  ['bob', ['approve', 'nosuch@1']],
  ['bob', ['approve', 'sinx@1']],
  ['bob', ['withdraw', 'sinx@2', '--reason', 'wrong sample']],
  ['alice', ['import', `${D}/sinx-pecvd-recipe-b.csv`, '--material', 'sinx', '--fit', 'tauc-lorentz', '--json']],
  ['bob', ['approve', 'sinx@3']],
  ['bob', ['retire', 'sinx@1', '--reason', 'recipe changed; use @3']],
  ['alice', ['list']],
  ['alice', ['list', '--json']],
  ['alice', ['list', '--search', 'oxide']],
  ['alice', ['list', '--tag', 'nitride']],
  ['alice', ['show', 'sinx@1']],
  ['alice', ['show', 'sinx', '--json']],
  ['alice', ['show', 'sinx@9']],
  ['alice', ['history', 'sinx']],
  ['alice', ['history', 'sinx', '--json']],
  ['alice', ['diff', 'sinx@1', 'sinx@3']],
  ['alice', ['diff', 'sinx@1', 'sinx@3', '--json']],
  ['alice', ['export', 'sinx@3', '--format', 'csv']],
  ['alice', ['export', 'sinx@1', '--format', 'json', '-o', '{work}/sinx-1.json']],
  ['alice', ['eval', 'sinx@3', '--at', '400:800:100', '--json']],
  ['alice', ['eval', 'sinx', '--at', '632.8']],
  ['alice', ['inspect', 'sinx@1']],
  ['alice', ['kk', 'sinx@3']],
  ['alice', ['kk', 'bump@1']],
  ['alice', ['fit', 'sio2@1', '--model', 'cauchy']],
  ['alice', ['lock', 'add', 'sinx@3', '--lock', '{work}/design.lock.json']],
  ['alice', ['lock', 'add', 'sio2', '--lock', '{work}/design.lock.json', '--json']],
  ['alice', ['lock', 'add', 'sinx@2', '--lock', '{work}/design.lock.json']],
  ['alice', ['lock', 'verify', '--lock', '{work}/design.lock.json']],
  ['alice', ['lock', 'outdated', '--lock', '{work}/design.lock.json', '--json']],
  ['alice', ['stack', '{design}', '--at', '400:700:100', '--lock', '{work}/design.lock.json']],
  ['alice', ['stack', '{design}', '--at', '550', '--angle', '0,45', '--json']],
  ['alice', ['stack', '{bad-design}', '--at', '550']],
  ['alice', ['material', 'edit', 'sio2', '--description', 'dry oxide', '--tag', 'oxide', '--json']],
  ['ada', ['verify']],
  ['ada', ['settings', 'set', 'allow_self_approval', 'on']],
  ['ada', ['settings', 'set', 'max_nk_points', 'lots']],
  ['ada', ['settings', 'reset', 'allow_self_approval', '--json']],
  ['ada', ['backup', '{work}/backup.db']],
  ['ada', ['backup', '{work}/backup.db']],
  ['ada', ['settings', 'show', '--json']],
];

/** The registry is named by its path in file mode and by its URL in server mode. */
const mask = (text: string, work: string, registry: string) =>
  text
    .split(registry)
    .join('<registry>')
    .split(work)
    .join('<work>')
    .split(DESIGN.slice(0, DESIGN.lastIndexOf('/')))
    .join('<dir>')
    .replace(/\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d+)?Z/g, '<time>')
    .replace(/\d{4}-\d\d-\d\d \d\d:\d\d UTC/g, '<time>')
    .replace(/audit chain head [0-9a-f]{64}/g, 'audit chain head <head>')
    .replace(/(event \d+) \([0-9a-f]{12}…\)/g, '$1 (<head>)')
    .replace(/("registry_head": \{\s*"hash": ")[0-9a-f]{64}/g, '$1<head>');

let DESIGN: string;
let BAD_DESIGN: string;

describe('server mode gives what file mode gives', () => {
  let lab: Lab;
  beforeAll(async () => {
    lab = await startLab();
    DESIGN = join(lab.dir, 'v-coat.stack.json');
    BAD_DESIGN = join(lab.dir, 'bad.stack.json');
    const design = (high: string) => ({
      name: 'two-layer test coating',
      layers: [
        { material: { ref: 'sio2' }, thickness_nm: 90 },
        { material: { ref: high }, thickness_nm: 30 },
      ],
      substrate: { material: { n: 1.46 } },
    });
    writeFileSync(DESIGN, JSON.stringify(design('sinx@3'), null, 2));
    writeFileSync(BAD_DESIGN, JSON.stringify(design('sinx@7'), null, 2));
  });
  afterAll(() => lab?.stop());

  it(`the same ${SCRIPT.length} commands: same exit codes, same text, same JSON`, { timeout: 120_000 }, async () => {
    const outputs: Record<'file' | 'server', CliResult[]> = { file: [], server: [] };
    for (const mode of ['file', 'server'] as const) {
      const work = join(lab.dir, mode);
      mkdirSync(work);
      for (const [person, args, input] of SCRIPT) {
        const r = await runCli(
          args.map((a) => a.replace('{work}', work).replace('{design}', DESIGN).replace('{bad-design}', BAD_DESIGN)),
          { env: lab.env(mode, person), input },
        );
        const registry = mode === 'file' ? lab.fileDb : lab.url;
        outputs[mode].push({ code: r.code, stdout: mask(r.stdout, work, registry), stderr: mask(r.stderr, work, registry) });
      }
    }
    SCRIPT.forEach(([person, args], i) => {
      const label = `${person}: nkledger ${args.join(' ')}`;
      expect(outputs.server[i], label).toEqual(outputs.file[i]);
    });
    // The script exercised what it should: refusals (2), a failed check (3) and successes.
    const codes = outputs.file.map((r) => r.code);
    expect(codes.filter((c) => c === 0).length).toBeGreaterThan(30);
    expect(codes).toContain(2);
    expect(codes).toContain(3);
    const codesOf = (command: string) => SCRIPT.flatMap(([, a], i) => (a[0] === command ? [outputs.file[i].code] : []));
    const outputOf = (who: string, line: string) => outputs.file[SCRIPT.findIndex(([p, a]) => p === who && a.join(' ') === line)];
    expect(outputOf('alice', 'import - --material coat --columns wavelength,n,k --no-kk --meta sample=W3')).toMatchObject({
      code: 0,
      stdout: expect.stringMatching(/^stored coat@3 \(draft\)/),
    });
    expect(codesOf('approve').slice(-3)).toEqual([2, 2, 0]); // bump@1 needs a reason; then it is approved with one
    expect(outputOf('bob', 'approve bump@1').stdout).toContain('KK');
    expect(codesOf('stack')).toEqual([0, 0, 2]);
    expect(codesOf('backup')).toEqual([0, 2]);
    expect(outputOf('bob', 'approve sinx@1').stdout).toMatch(/approved .* by bob/);
  });
});
