/** The one settings catalogue through the API and the CLI: allow_self_approval sits beside the server settings. */
import { join } from 'node:path';
import { openRegistry } from '../../src/registry/open.ts';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readSettings } from '../../src/service/settings.ts';
import { runCli } from '../cli/run-cli.ts';
import { csv, csvTable, json, startHarness, type ApiHarness } from './harness.ts';
import { cli } from '../reliability/processes.ts';

let h: ApiHarness;
beforeAll(async () => {
  h = await startHarness();
});
afterAll(() => h.stop());

describe('settings routes and command', { timeout: 120_000 }, () => {
  it('GET /settings lists allow_self_approval; PUT turns it on and an approver may then approve their own upload', async () => {
    const listed = await (await h.request('/api/v1/settings', { as: 'admin' })).json();
    expect(listed.settings).toMatchObject({ allow_self_approval: false, anonymous_reads: 'auto' });
    expect((await h.request('/api/v1/materials', { ...json({ slug: 'mgf2-evap', name: 'MgF2' }), as: 'approver' })).status).toBe(201);
    expect((await h.request('/api/v1/materials/mgf2-evap/versions?kk=false', { ...csv(csvTable()), as: 'approver' })).status).toBe(201);
    const refused = await h.request('/api/v1/materials/mgf2-evap/versions/1/approve', { method: 'POST', as: 'approver' });
    expect(refused.status).toBe(409);
    expect((await refused.json()).detail).toMatch(/may allow self-approval: setting allow_self_approval/);
    const bad = await h.request('/api/v1/settings/allow_self_approval', { ...json({ value: 'on' }), method: 'PUT', as: 'admin' });
    expect(bad.status).toBe(422); // JSON takes a boolean
    const set = await h.request('/api/v1/settings/allow_self_approval', { ...json({ value: true }), method: 'PUT', as: 'admin' });
    expect((await set.json()).settings.allow_self_approval).toBe(true);
    const approved = await h.request('/api/v1/materials/mgf2-evap/versions/1/approve', { method: 'POST', as: 'approver' });
    expect(approved.status).toBe(200);
    expect(await approved.json()).toMatchObject({ status: 'approved', self_approved: true });
    expect((await h.request('/api/v1/settings/allow_self_approval', { method: 'DELETE', as: 'admin' })).status).toBe(200);
    expect((await readSettings(h.registry)).allow_self_approval).toBe(false);
  });

  it('`nkledger settings` shows, sets and resets allow_self_approval; the old self-approval command is gone', async () => {
    const db = join(h.dir, 'cli.db');
    await (await openRegistry(db)).close(); // the CLI's settings command works on an existing registry only
    const run = (...args: string[]) => runCli(args, { env: { NKLEDGER_USER: 'ada', NKLEDGER_DB: db } });
    const shown = await run('settings', 'show');
    expect(shown.code).toBe(0);
    expect(shown.stdout).toMatch(/^allow_self_approval +false +let the creator of a version approve it/m);
    const set = await run('settings', 'set', 'allow_self_approval', 'on', '--json');
    expect(set.code).toBe(0);
    expect(JSON.parse(set.stdout).allow_self_approval).toBe(true);
    const bad = await run('settings', 'set', 'allow_self_approval', 'maybe');
    expect(bad.code).toBe(2);
    expect(bad.stderr).toMatch(/bad value for setting allow_self_approval: say on or off \[setting-value\]/);
    expect(JSON.parse((await run('settings', 'reset', 'allow_self_approval', '--json')).stdout).allow_self_approval).toBe(false);
    expect((await run('self-approval', 'on')).code).not.toBe(0);
    expect((await run('--help')).stdout).not.toMatch(/^  self-approval /m);
  });
});

describe('settings changed outside the server', { timeout: 120_000 }, () => {
  // A server of its own: the tests above block this process (spawnSync), leaving stale keep-alive sockets.
  let h: ApiHarness;
  beforeAll(async () => {
    h = await startHarness();
  });
  afterAll(() => h.stop());

  it('`nkledger settings set anonymous_reads off` in another process reaches the running server', async () => {
    expect((await h.request('/api/v1/materials')).status).toBe(200);
    // The CLI runs asynchronously (the server lives in this process and must keep answering).
    const set = await cli(['settings', 'set', 'anonymous_reads', 'off', '--db', h.registry.path], 'lab-admin');
    expect(set.code, set.err).toBe(0);
    expect((await h.request('/api/v1/materials')).status).toBe(401);
    expect((await h.request('/api/v1/materials', { as: 'reader' })).status).toBe(200);
    const reset = await cli(['settings', 'reset', 'anonymous_reads', '--db', h.registry.path], 'lab-admin');
    expect(reset.code, reset.err).toBe(0);
    expect((await h.request('/api/v1/materials')).status).toBe(200);
  });
});
