/**
 * The routes server mode uses, through real HTTP: a version by any reference, history, whoami, tag edits,
 * settings as typed text, several tables all or none (a refused one stores nothing), one table per upload.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { csvTable, json, snapshotCounts, startHarness, approvedGlass, type ApiHarness } from './harness.ts';

describe('routes for server mode', () => {
  let h: ApiHarness;
  beforeAll(async () => {
    h = await startHarness();
    await approvedGlass(h);
  });
  afterAll(() => h.stop());

  it('GET /refs/{ref} resolves a bare slug and a hash prefix, with the notice a bare slug earns', async () => {
    const bare = await (await h.request('/api/v1/refs/glass', { as: 'reader' })).json();
    expect(bare).toMatchObject({ ref: 'glass@1', status: 'approved' });
    expect(bare.notices.join(' ')).toContain('not a pin');
    const byHash = await h.request(`/api/v1/refs/${encodeURIComponent(`glass@sha256:${bare.sha256.slice(0, 10)}`)}`, { as: 'reader' });
    expect((await byHash.json()).ref).toBe('glass@1');
    const missing = await h.request('/api/v1/refs/glass@4', { as: 'reader' });
    expect(missing.status).toBe(404);
  });

  it('GET /materials/{slug}/history and /whoami', async () => {
    const history = await (await h.request('/api/v1/materials/glass/history', { as: 'reader' })).json();
    expect(history.audit.map((a: { action: string }) => a.action)).toEqual(['material.create', 'version.import', 'version.approve']);
    expect(await (await h.request('/api/v1/whoami', { as: 'editor' })).json()).toMatchObject({ user: 'editor', role: 'editor' });
    expect((await h.request('/api/v1/whoami')).status).toBe(401);
  });

  it('PATCH takes add_tags and remove_tags; PUT /settings takes the text a command line types', async () => {
    const edit = { ...json({ add_tags: ['oxide', 'glass'] }), method: 'PATCH' };
    expect((await (await h.request('/api/v1/materials/glass', { ...edit, as: 'editor' })).json()).tags).toEqual(['glass', 'oxide']);
    const untag = { ...json({ remove_tags: ['glass'] }), method: 'PATCH' };
    expect((await (await h.request('/api/v1/materials/glass', { ...untag, as: 'editor' })).json()).changed).toEqual(['tags']);
    const set = await h.request('/api/v1/settings/allow_self_approval', { ...json({ text: 'on' }), method: 'PUT', as: 'admin' });
    expect((await set.json()).settings.allow_self_approval).toBe(true);
  });

  it('POST /materials/{slug}/imports stores several tables all or none; the single upload route takes one', async () => {
    const form = (second: string) => {
      const f = new FormData();
      f.append('table', new Blob([csvTable(2.31)]), 'a.csv');
      f.append('table', new Blob([second]), 'b.csv');
      return f;
    };
    const before = snapshotCounts(h);
    const bad = await h.request('/api/v1/materials/glass/imports', {
      method: 'POST',
      body: form('wavelength_nm,n,k\n400,abc,0\n500,1.5,0\n'),
      as: 'editor',
    });
    expect(bad.status).toBe(400);
    expect(await bad.json()).toMatchObject({ rule: 'non-numeric', file: 'b.csv', line: 2 });
    expect(snapshotCounts(h)).toEqual(before);
    const one = await h.request('/api/v1/materials/glass/versions', { method: 'POST', body: form(csvTable(2.32)), as: 'editor' });
    expect(one.status).toBe(400);
    expect((await one.json()).rule).toBe('upload-one-table');
    const ok = await h.request('/api/v1/materials/glass/imports', { method: 'POST', body: form(csvTable(2.33)), as: 'editor' });
    expect(ok.status).toBe(201);
    expect((await ok.json()).versions.map((v: { ref: string }) => v.ref)).toEqual(['glass@2', 'glass@3']);
  });
});
