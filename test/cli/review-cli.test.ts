/**
 * The reviewer's commands in-process: `review` lists what a user may approve, `approve` prints the review summary
 * before its outcome and needs --accept-warnings REASON for a KK-inconsistent version (the reason lands in the audit
 * log and `verify` still passes); `token create --expires` and `token list` with expiry and last use.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from './run-cli.ts';

let dir: string;
let db: string;
const cli = (args: string[], user = 'anna') => runCli([...args, '--db', db], { env: { NKLEDGER_USER: user } });

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'nkledger-review-cli-'));
  db = join(dir, 'lab.db');
  expect((await cli(['material', 'add', 'bump-film', '--name', 'Film with an n bump'])).code).toBe(0);
  // lorentz-bump.csv: a Lorentz pair with a bump added to n only (scripts/gen-kk-cases.py), so KK-inconsistent
  const imported = await cli([
    'import',
    'test/fixtures/kk/lorentz-bump.csv',
    '--material',
    'bump-film',
    '--fit',
    'lorentz',
    '--terms',
    '2',
    '--meta',
    'sample=W7',
    'operator=anna',
  ]);
  expect(imported.code, imported.stderr).toBe(0);
  expect((await cli(['import', 'test/fixtures/kk/lorentz-pair.csv', '--material', 'bump-film', '--no-kk'])).code).toBe(0);
}, 60_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('nkledger review', () => {
  it('lists the drafts someone else may approve, with KK verdict, fit and what blocks', async () => {
    const r = await cli(['review'], 'ben');
    expect(r.code).toBe(0);
    expect(r.stdout).toMatch(/^2 drafts ben may approve:/);
    expect(r.stdout).toMatch(/bump-film@1 .*anna.*inconsistent +lorentz .*accept: kk-inconsistent/);
    expect(r.stdout).toMatch(/bump-film@2 .*anna.*not-run +none .* ok/);
    const own = await cli(['review'], 'anna');
    expect(own.stdout).toBe('no drafts for anna to review (2 of your own left out: someone else approves those)\n');
    const json = JSON.parse((await cli(['review', '--json'], 'ben')).stdout);
    expect(json).toMatchObject({ user: 'ben', may_approve: true, own_drafts: 0 });
    expect(json.drafts[0]).toMatchObject({
      ref: 'bump-film@1',
      kk: { verdict: 'inconsistent' },
      fit: { model: 'lorentz', converged: true },
      provenance: { sample: 'W7' },
    });
    expect((await cli(['review', '--long'], 'ben')).stdout).toMatch(
      /review of bump-film@1 \(draft, sha256:[0-9a-f]{12}…\)\n {2}KK check {5}inconsistent \(rms Δn/,
    );
  });
});

describe('nkledger approve', () => {
  it('shows the summary, then refuses a KK-inconsistent draft without --accept-warnings (exit 2, nothing written)', async () => {
    const r = await cli(['approve', 'bump-film@1'], 'ben');
    expect(r.code).toBe(2);
    expect(r.stdout).toMatch(/^review of bump-film@1 \(draft/);
    expect(r.stdout).toMatch(/ {2}BLOCKING {5}the Kramers-Kronig check found n and k inconsistent \[kk-inconsistent\]/);
    expect(r.stderr).toMatch(/bump-film@1 was not approved: .*use --accept-warnings REASON \[approval-warnings-unaccepted\]\n$/);
    expect(JSON.parse((await cli(['show', 'bump-film@1', '--json'])).stdout).status).toBe('draft');
  });

  it('approves with a reason: summary, outcome line, the accepted findings; history shows the reason; verify passes', async () => {
    const r = await cli(['approve', 'bump-film@1', '--accept-warnings', 'bump at 750 nm is the known interface artefact'], 'ben');
    expect(r.code, r.stderr).toBe(0);
    const lines = r.stdout.split('\n');
    const outcome = lines.findIndex((l) => l.startsWith('bump-film@1  approved  sha256:'));
    expect(lines[0]).toMatch(/^review of bump-film@1 \(draft/);
    expect(outcome).toBeGreaterThan(5);
    expect(r.stdout).toMatch(/ {2}accepted {3}kk-inconsistent: bump at 750 nm is the known interface artefact/);
    expect((await cli(['history', 'bump-film'])).stdout).toMatch(
      /ben +version\.approve +bump-film@1 +\(accepted kk-inconsistent: bump at 750 nm is the known interface artefact\)/,
    );
    const verify = await cli(['verify']);
    expect(verify.code, verify.stdout + verify.stderr).toBe(0);
  });

  it('--json includes the review and no accepted warnings when nothing blocks', async () => {
    const r = await cli(['approve', 'bump-film@2', '--json'], 'ben');
    expect(r.code, r.stderr).toBe(0);
    expect(JSON.parse(r.stdout)).toMatchObject({
      ref: 'bump-film@2',
      status: 'approved',
      review: { kk: { verdict: 'not-run' }, blocking: [] },
      accepted_warnings: null,
    });
  });
});

describe('nkledger token with expiry', () => {
  it('creates with --expires, refuses a bad lifetime, and lists expiry and last use', async () => {
    const made = await cli(['token', 'create', '--user', 'tool', '--role', 'reader', '--expires', '12h'], 'root');
    expect(made.code).toBe(0);
    expect(made.stdout).toMatch(/token tok_[0-9a-f]{12} for tool \(role reader\), expires \d{4}-\d\d-\d\d \d\d:\d\d UTC\./);
    const never = JSON.parse((await cli(['token', 'create', '--user', 'ci', '--role', 'reader', '--expires', 'never', '--json'], 'root')).stdout);
    expect(never.expires_at).toBeNull();
    const bad = await cli(['token', 'create', '--user', 'x', '--role', 'reader', '--expires', '2w'], 'root');
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/"2w" is not a token lifetime.*\[token-lifetime\]/);
    const list = (await cli(['token', 'list'])).stdout;
    expect(list.split('\n')[0]).toMatch(/id +user +role +created +by +expires +last used +state/);
    expect(list).toMatch(/tool +reader .* \d{4}-\d\d-\d\d \d\d:\d\d UTC +never +active/);
    expect(list).toMatch(/ci +reader .* never +never +active/);
  });
});
