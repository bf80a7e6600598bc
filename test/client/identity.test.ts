/**
 * Who acts in server mode is the token's user: two people import and approve each other's drafts; nobody approves
 * their own, with or without --as / NKLEDGER_USER (refused before anything is sent); writes without a token are
 * 401 with the way to log in. `nkledger login` keeps the token in a 0600 file, `logout` forgets it.
 */
import { readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createToken } from '../../src/service/tokens.ts';
import { runCli } from '../cli/run-cli.ts';
import { CLEAN_ENV, startLab, type Lab } from './lab-server.ts';

const TABLE_A = 'data/marrowick/sinx-pecvd-recipe-a.csv';
const TABLE_B = 'data/marrowick/sinx-pecvd-recipe-b.csv';

describe('server mode: identity from the token', () => {
  let lab: Lab;
  const count = (sql: string) => (lab.registry.sqlite.prepare(sql).get() as { n: number }).n;
  beforeAll(async () => {
    lab = await startLab();
    expect((await runCli(['material', 'add', 'sinx', '--name', 'SiNx'], { env: lab.env('server', 'alice') })).code).toBe(0);
  });
  afterAll(() => lab?.stop());

  it("two people import and approve each other's drafts; the audit log names the token's users", async () => {
    expect((await runCli(['import', TABLE_A, '--material', 'sinx'], { env: lab.env('server', 'alice') })).code).toBe(0);
    expect((await runCli(['import', TABLE_B, '--material', 'sinx'], { env: lab.env('server', 'bob') })).code).toBe(0);
    const own = await runCli(['approve', 'sinx@1'], { env: lab.env('server', 'alice') });
    expect(own.code).toBe(2);
    expect(own.stderr).toContain('alice created sinx@1 and cannot also approve it');
    expect((await runCli(['approve', 'sinx@1'], { env: lab.env('server', 'bob') })).code).toBe(0);
    expect((await runCli(['approve', 'sinx@2'], { env: lab.env('server', 'alice') })).code).toBe(0);
    const h = JSON.parse((await runCli(['history', 'sinx', '--json'], { env: lab.env('server', 'rita') })).stdout);
    expect(h.versions.map((v: { created_by: string; approved_by: string }) => [v.created_by, v.approved_by])).toEqual([
      ['alice', 'bob'],
      ['bob', 'alice'],
    ]);
  });

  it('--as and NKLEDGER_USER are refused in server mode (exit 2), before any request: self-approval stays impossible', async () => {
    expect((await runCli(['import', TABLE_A, '--material', 'sinx', '--note', 'again'], { env: lab.env('server', 'alice') })).code).toBe(0);
    const events = count('SELECT COUNT(*) AS n FROM audit_log');
    const viaFlag = await runCli(['approve', 'sinx@3', '--as', 'bob'], { env: lab.env('server', 'alice') });
    expect(viaFlag.code).toBe(2);
    expect(viaFlag.stderr).toMatch(/^nkledger: --as bob: in server mode the server records who acts from the token .* \[identity-from-token\]\n$/);
    const viaEnv = await runCli(['approve', 'sinx@3'], { env: { ...lab.env('server', 'alice'), NKLEDGER_USER: 'bob' } });
    expect(viaEnv.code).toBe(2);
    expect(viaEnv.stderr).toContain('NKLEDGER_USER=bob: in server mode');
    // Reads do not act, so a NKLEDGER_USER left in the shell does not stop them.
    expect((await runCli(['show', 'sinx@3'], { env: { ...lab.env('server', 'alice'), NKLEDGER_USER: 'bob' } })).code).toBe(0);
    expect(count('SELECT COUNT(*) AS n FROM audit_log')).toBe(events);
    expect(count("SELECT COUNT(*) AS n FROM material_versions WHERE status = 'approved'")).toBe(2);
  });

  it('a write without a token is 401 (exit 2) and says how to log in; a reader token is 403', async () => {
    const anonymous = await runCli(['approve', 'sinx@3'], { env: { ...CLEAN_ENV, NKLEDGER_SERVER: lab.url } });
    expect(anonymous.code).toBe(2);
    expect(anonymous.stderr).toContain(`log in with \`nkledger login ${lab.url}\` or set NKLEDGER_TOKEN [auth-required]`);
    const reader = await runCli(['approve', 'sinx@3'], { env: lab.env('server', 'rita') });
    expect(reader.code).toBe(2);
    expect(reader.stderr).toContain('has role reader; this request needs approver or above [auth-forbidden]');
  });

  it('an expired token: 401 with its own rule (exit 2), one line naming the token and what to do', async () => {
    const expiring = await createToken(lab.registry, { user: 'temp', role: 'approver', createdBy: 'setup', expires: '1h' });
    lab.registry.sqlite.prepare('UPDATE api_tokens SET expires_at = ? WHERE id = ?').run(new Date(Date.now() - 1000).toISOString(), expiring.id);
    const r = await runCli(['list'], { env: { ...CLEAN_ENV, NKLEDGER_SERVER: lab.url, NKLEDGER_TOKEN: expiring.token } });
    expect(r.code).toBe(2);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toContain(`token ${expiring.id} (temp) expired at`);
    expect(r.stderr).toContain('[auth-token-expired]');
  });

  it('login reads the token from standard input, checks it, saves it with mode 0600; logout forgets it', async () => {
    const credentials = join(lab.dir, 'config', 'nkledger', 'credentials.json');
    const env = { ...CLEAN_ENV, NKLEDGER_CREDENTIALS: undefined, XDG_CONFIG_HOME: join(lab.dir, 'config') };
    const bad = await runCli(['login', lab.url], { env, input: 'nkl_not-a-real-token\n' });
    expect(bad.code).toBe(2);
    expect(bad.stderr).toContain('[auth-invalid-token]');
    const login = await runCli(['login', `${lab.url}/`], { env, input: `${lab.tokens.bob}\n` });
    expect(login).toMatchObject({ code: 0, stdout: `logged in to ${lab.url} as bob (role approver); token saved in ${credentials}\n` });
    expect(statSync(credentials).mode & 0o777).toBe(0o600);
    expect(JSON.parse(readFileSync(credentials, 'utf8')).servers[lab.url]).toMatchObject({ token: lab.tokens.bob, user: 'bob' });
    // The saved token acts; NKLEDGER_TOKEN wins over it.
    const withSaved = await runCli(['approve', 'sinx@3', '--json'], { env: { ...env, NKLEDGER_SERVER: lab.url } });
    expect(withSaved.code).toBe(0);
    expect(JSON.parse(withSaved.stdout).approved_by).toBe('bob');
    const overridden = await runCli(['withdraw', 'sinx@3'], { env: { ...env, NKLEDGER_SERVER: lab.url, NKLEDGER_TOKEN: lab.tokens.rita } });
    expect(overridden.stderr).toContain('has role reader');
    const logout = await runCli(['logout', lab.url], { env });
    expect(logout).toMatchObject({ code: 0, stdout: `logged out of ${lab.url}; its token was removed from ${credentials}\n` });
    expect(JSON.parse(readFileSync(credentials, 'utf8')).servers).toEqual({});
    const again = await runCli(['logout', lab.url], { env });
    expect(again.stdout).toBe(`no saved token for ${lab.url} in ${credentials}\n`);
  });

  it('no token given to login is refused (exit 2); the token is never an argument', async () => {
    const r = await runCli(['login', lab.url], { env: { ...CLEAN_ENV, NKLEDGER_CREDENTIALS: join(lab.dir, 'c.json') }, input: '' });
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('[login-no-token]');
    const asArgument = await runCli(['login', lab.url, lab.tokens.bob], { env: CLEAN_ENV });
    expect(asArgument.code).toBe(2);
  });
});
