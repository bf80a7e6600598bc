/**
 * The setting writes=server-only: direct writes to the file (the CLI with --db) are refused, reads still work,
 * the server's own writes go on; the setting itself changes only through the server, by an admin.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../cli/run-cli.ts';
import { startLab, type Lab } from './lab-server.ts';

describe('writes=server-only', () => {
  let lab: Lab;
  const count = (table: string) => (lab.registry.sqlite.prepare(`SELECT COUNT(*) AS n FROM ${table}`).get() as { n: number }).n;
  /** File mode on the server's own file, as `person`. */
  const direct = (person: 'alice' | 'ada') => ({ ...lab.env('file', person), NKLEDGER_DB: lab.serverDb });
  beforeAll(async () => {
    lab = await startLab();
  });
  afterAll(() => lab?.stop());

  it('is refused when set on the file directly (exit 2), and by a non-admin through the server', async () => {
    const r = await runCli(['settings', 'set', 'writes', 'server-only'], { env: direct('ada') });
    expect(r.code).toBe(2);
    expect(r.stderr).toBe(
      'nkledger: the setting "writes" is changed only through the server, by an admin (nkledger settings set writes VALUE --server URL) [writes-setting-server]\n',
    );
    const notAdmin = await runCli(['settings', 'set', 'writes', 'server-only'], { env: lab.env('server', 'alice') });
    expect(notAdmin.stderr).toContain('[auth-forbidden]');
  });

  it('set through the server: direct writes refuse and write nothing, reads and server-mode writes work', async () => {
    const set = await runCli(['settings', 'set', 'writes', 'server-only', '--json'], { env: lab.env('server', 'ada') });
    expect(set.code).toBe(0);
    expect(JSON.parse(set.stdout).writes).toBe('server-only');
    const before = [count('materials'), count('audit_log'), count('api_tokens')];
    for (const args of [
      ['material', 'add', 'sinx', '--name', 'SiNx'],
      ['import', 'data/marrowick/sinx-pecvd-recipe-a.csv', '--material', 'sinx'],
      ['token', 'create', '--user', 'mallory', '--role', 'admin'],
      ['settings', 'reset', 'writes'],
    ]) {
      const r = await runCli(args, { env: direct(args[0] === 'material' || args[0] === 'import' ? 'alice' : 'ada') });
      expect(r.code, args.join(' ')).toBe(2);
      expect(r.stderr, args.join(' ')).toMatch(/\[writes-(server-only|setting-server)\]\n$/);
    }
    expect([count('materials'), count('audit_log'), count('api_tokens')]).toEqual(before);
    const refused = await runCli(['material', 'add', 'sinx', '--name', 'SiNx'], { env: direct('alice') });
    expect(refused.stderr).toContain('takes writes only through its server (setting writes=server-only)');
    expect((await runCli(['list', '--json'], { env: direct('alice') })).code).toBe(0);
    expect((await runCli(['material', 'add', 'sinx', '--name', 'SiNx'], { env: lab.env('server', 'alice') })).code).toBe(0);
    expect(count('materials')).toBe(1);
  });

  it('an admin switches it back through the server; direct writes work again', async () => {
    expect((await runCli(['settings', 'reset', 'writes'], { env: lab.env('server', 'ada') })).code).toBe(0);
    expect((await runCli(['material', 'add', 'sio2', '--name', 'Oxide'], { env: direct('alice') })).code).toBe(0);
  });
});
