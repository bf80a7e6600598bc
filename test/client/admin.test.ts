/**
 * Admin commands in server mode: `verify` runs on the server, `backup` streams a consistent snapshot that
 * verifies as a registry of its own and appears only when complete; both need an admin token.
 */
import { existsSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../cli/run-cli.ts';
import { CLEAN_ENV, startLab, type Lab } from './lab-server.ts';

describe('server mode: verify and backup (admin)', () => {
  let lab: Lab;
  beforeAll(async () => {
    lab = await startLab();
    await runCli(['material', 'add', 'sinx', '--name', 'SiNx'], { env: lab.env('server', 'alice') });
    await runCli(['import', 'data/marrowick/sinx-pecvd-recipe-a.csv', '--material', 'sinx'], { env: lab.env('server', 'alice') });
  });
  afterAll(() => lab?.stop());

  it('verify: the server checks its own file; a non-admin is refused (exit 2)', async () => {
    const r = await runCli(['verify', '--json'], { env: lab.env('server', 'ada') });
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout)).toMatchObject({ ok: true, checked_versions: 1 });
    const notAdmin = await runCli(['verify'], { env: lab.env('server', 'bob') });
    expect(notAdmin.code).toBe(2);
    expect(notAdmin.stderr).toContain('this request needs admin or above [auth-forbidden]');
  });

  it('token create, list and revoke go through the server, as the admin of the token sent', async () => {
    const created = await runCli(['token', 'create', '--user', 'carla', '--role', 'editor', '--json'], { env: lab.env('server', 'ada') });
    expect(created.code).toBe(0);
    const token = JSON.parse(created.stdout);
    expect(token).toMatchObject({ user: 'carla', role: 'editor', created_by: 'ada' });
    const revoked = await runCli(['token', 'revoke', token.id], { env: lab.env('server', 'ada') });
    expect(revoked.stdout).toMatch(new RegExp(`^revoked ${token.id} \\(carla, editor\\)`));
    const active = JSON.parse((await runCli(['token', 'list', '--active', '--json'], { env: lab.env('server', 'ada') })).stdout);
    expect(active.map((t: { user: string }) => t.user).sort()).toEqual(['ada', 'alice', 'bob', 'rita']);
    const refused = await runCli(['token', 'create', '--user', 'eve', '--role', 'admin'], { env: lab.env('server', 'alice') });
    expect(refused.code).toBe(2);
    expect(refused.stderr).toContain('[auth-forbidden]');
  });

  it('backup: the snapshot is a registry that verifies; an existing file is never overwritten; no partial file is left', async () => {
    const file = join(lab.dir, 'snap', 'lab.db');
    const missingFolder = await runCli(['backup', file], { env: lab.env('server', 'ada') });
    expect(missingFolder.code).toBe(2);
    expect(missingFolder.stderr).toContain('[backup-failed]');
    expect(readdirSync(lab.dir).filter((f) => f.includes('partial'))).toEqual([]);
    const target = join(lab.dir, 'lab-backup.db');
    const r = await runCli(['backup', target, '--json'], { env: lab.env('server', 'ada') });
    expect(r.code).toBe(0);
    expect(JSON.parse(r.stdout)).toMatchObject({ path: target });
    const check = await runCli(['verify', '--db', target, '--json'], { env: CLEAN_ENV });
    expect(check.code).toBe(0);
    expect(JSON.parse(check.stdout)).toMatchObject({ ok: true, checked_versions: 1 });
    const again = await runCli(['backup', target], { env: lab.env('server', 'ada') });
    expect(again.code).toBe(2);
    expect(again.stderr).toContain('already exists; choose a new file (backups never overwrite) [backup-exists]');
    expect(readdirSync(lab.dir).filter((f) => f.includes('partial'))).toEqual([]);
    const notAdmin = await runCli(['backup', join(lab.dir, 'other.db')], { env: lab.env('server', 'alice') });
    expect(notAdmin.code).toBe(2);
    expect(existsSync(join(lab.dir, 'other.db'))).toBe(false);
  });
});
