/**
 * Lab mode through HTTP: what a reviewer sees (GET /review, GET …/review, approve with `accept_warnings`), and
 * tokens that end (an expired token is 401 with its own rule; last use recorded at most once an hour; a token made
 * before expiry existed keeps working after the migration).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sha256Hex } from '../../src/registry/canonical.ts';
import { readAuditRows } from '../../src/registry/chain.ts';
import { openRegistry } from '../../src/registry/open.ts';
import { createMaterial } from '../../src/service/materials.ts';
import { verifyRegistry } from '../../src/service/registry-admin.ts';
import { authenticateToken, createToken, listTokens, RECORD_USE_EVERY_MS, recordTokenUse } from '../../src/service/tokens.ts';
import { importVersion } from '../../src/service/versions.ts';
import type { StoredKkReport } from '../../src/registry/types.ts';
import { cauchyTable, databaseAtMigration } from '../registry/helpers.ts';
import { json, snapshotCounts, startHarness, type ApiHarness } from './harness.ts';

const kk = (verdict: string) =>
  ({ verdict, summary: `KK ${verdict}`, tolerance: 0.005, rms_dn: 0.003, max_dn: 0.01, worst_nm: 700 }) as StoredKkReport;

describe('review through the API', () => {
  let h: ApiHarness;
  beforeAll(async () => {
    h = await startHarness({ settings: { anonymous_reads: 'off' } });
    await createMaterial(h.registry, { slug: 'film', name: 'Film' }, 'editor');
    await importVersion(h.registry, { slug: 'film', table: cauchyTable(1.5), kk: kk('inconsistent') }, 'editor'); // film@1
    await importVersion(h.registry, { slug: 'film', table: cauchyTable(1.6), kk: kk('consistent') }, 'approver'); // film@2, the approver's own
  });
  afterAll(() => h.stop());

  it("GET /review lists the drafts the token's user may approve, with their verdicts, not their own", async () => {
    const res = await h.request('/api/v1/review', { as: 'approver' });
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body).toMatchObject({ user: 'approver', may_approve: true, own_drafts: 1 });
    expect(
      body.drafts.map((d: { ref: string; kk: { verdict: string }; blocking: { rule: string }[] }) => [
        d.ref,
        d.kk.verdict,
        d.blocking.map((b) => b.rule),
      ]),
    ).toEqual([['film@1', 'inconsistent', ['kk-inconsistent']]]);
    const editor = await (await h.request('/api/v1/review', { as: 'editor' })).json();
    expect(editor).toMatchObject({ may_approve: false, drafts: [] });
    expect((await h.request('/api/v1/review')).status).toBe(401);
  });

  it("GET …/versions/{n}/review gives one version's summary", async () => {
    const res = await h.request('/api/v1/materials/film/versions/2/review', { as: 'reader' });
    expect(res.status).toBe(200);
    expect(await res.json()).toMatchObject({ ref: 'film@2', status: 'draft', kk: { verdict: 'consistent' }, fit: null, blocking: [] });
  });

  it('approve refuses a KK-inconsistent version without accept_warnings: 409 problem with rule, field, value and the review; nothing written', async () => {
    const before = snapshotCounts(h);
    const res = await h.request('/api/v1/materials/film/versions/1/approve', { method: 'POST', as: 'approver' });
    expect(res.status).toBe(409);
    expect(res.headers.get('content-type')).toMatch(/problem\+json/);
    const p = await res.json();
    expect(p).toMatchObject({
      rule: 'approval-warnings-unaccepted',
      field: 'content.kk.verdict',
      option: 'accept_warnings',
      value: 'inconsistent',
      remedies: [{ option: 'accept_warnings', value: 'REASON' }],
      blocking: [{ rule: 'kk-inconsistent' }],
      review: { ref: 'film@1', kk: { verdict: 'inconsistent' } },
    });
    expect(p.detail).toMatch(/use accept_warnings=REASON \[approval-warnings-unaccepted\]/);
    const blank = await h.request('/api/v1/materials/film/versions/1/approve', { ...json({ accept_warnings: ' ' }), as: 'approver' });
    expect(blank.status).toBe(400);
    expect(await blank.json()).toMatchObject({ rule: 'reason-required', field: 'accept_warnings' });
    expect(snapshotCounts(h)).toEqual(before);
  });

  it('approve with accept_warnings approves, answers the review and the accepted findings, and the chain verifies', async () => {
    const res = await h.request('/api/v1/materials/film/versions/1/approve', {
      ...json({ accept_warnings: 'KK misfit is the known substrate artefact' }),
      as: 'approver',
    });
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body).toMatchObject({
      ref: 'film@1',
      status: 'approved',
      approved_by: 'approver',
      review: { kk: { verdict: 'inconsistent' } },
      accepted_warnings: { reason: 'KK misfit is the known substrate artefact', findings: ['kk-inconsistent'] },
    });
    const event = (await readAuditRows(h.registry)).at(-1)!;
    expect(JSON.parse(event.detail).accepted_warnings.reason).toBe('KK misfit is the known substrate artefact');
    expect((await verifyRegistry(h.registry)).ok).toBe(true);
  });
});

describe('tokens that end', () => {
  let h: ApiHarness;
  beforeAll(async () => {
    h = await startHarness({ settings: { anonymous_reads: 'off' } });
  });
  afterAll(() => h.stop());

  const expireNow = (id: string) =>
    h.registry.sqlite.prepare('UPDATE api_tokens SET expires_at = ? WHERE id = ?').run(new Date(Date.now() - 1000).toISOString(), id);

  it('a new token gets the token_lifetime default (90d), or its own lifetime in days or hours, or never', async () => {
    const hour = 3_600_000;
    const at = (t: { expires_at: string | null }) => (t.expires_at === null ? null : Math.round((Date.parse(t.expires_at) - Date.now()) / hour));
    expect(at(await createToken(h.registry, { user: 'a', role: 'reader', createdBy: 'root' }))).toBe(90 * 24);
    expect(at(await createToken(h.registry, { user: 'b', role: 'reader', createdBy: 'root', expires: '12h' }))).toBe(12);
    expect(at(await createToken(h.registry, { user: 'c', role: 'reader', createdBy: 'root', expires: 'never' }))).toBeNull();
    await expect(createToken(h.registry, { user: 'd', role: 'reader', createdBy: 'root', expires: '0d' })).rejects.toThrow(/not a token lifetime/);
    await expect(createToken(h.registry, { user: 'd', role: 'reader', createdBy: 'root', expires: '3651d' })).rejects.toThrow(/at most 3650d/);
  });

  it('an expired token is 401 auth-token-expired (also when the server remembered it), and listed as expired', async () => {
    const t = await createToken(h.registry, { user: 'temp', role: 'reader', createdBy: 'root', expires: '1h' });
    expect((await h.request('/api/v1/materials', { token: t.token })).status).toBe(200); // the server now remembers it
    expireNow(t.id);
    const res = await h.request('/api/v1/materials', { token: t.token });
    expect(res.status).toBe(401);
    expect(res.headers.get('www-authenticate')).toMatch(/error="invalid_token"/);
    const p = await res.json();
    expect(p).toMatchObject({ rule: 'auth-token-expired', type: 'urn:nkledger:problem:auth-token-expired' });
    expect(p.detail).toMatch(new RegExp(`token ${t.id} \\(temp\\) expired at`));
    expect((await listTokens(h.registry)).find((x) => x.id === t.id)).toMatchObject({ expired: true, revoked_at: null });
    expect((await listTokens(h.registry, { activeOnly: true })).some((x) => x.id === t.id)).toBe(false);
  });

  it('POST /tokens takes "expires"; a bad lifetime is a 400 problem naming the field', async () => {
    const ok = await h.request('/api/v1/tokens', { ...json({ user: 'tool', role: 'reader', expires: '30d' }), as: 'admin' });
    expect(ok.status).toBe(201);
    expect((await ok.json()).expires_at).toMatch(/^\d{4}-\d\d-\d\dT/);
    const before = snapshotCounts(h);
    const bad = await h.request('/api/v1/tokens', { ...json({ user: 'tool', role: 'reader', expires: '3 weeks' }), as: 'admin' });
    expect(bad.status).toBe(400);
    expect(await bad.json()).toMatchObject({ rule: 'token-lifetime', field: 'expires', value: '3 weeks' });
    expect(snapshotCounts(h)).toEqual(before);
  });

  it('records last use on the first request, then not again within the hour', async () => {
    const t = await createToken(h.registry, { user: 'poller', role: 'reader', createdBy: 'root' });
    const lastUsed = async () => (await listTokens(h.registry)).find((x) => x.id === t.id)!.last_used_at;
    expect(await lastUsed()).toBeNull();
    await h.request('/api/v1/materials', { token: t.token });
    const first = await lastUsed();
    expect(first).not.toBeNull();
    await h.request('/api/v1/materials', { token: t.token });
    expect(await lastUsed()).toBe(first);
    // an hour later (passed in as `now`) it is written again
    const principal = (await authenticateToken(h.registry, t.token))!;
    await recordTokenUse(h.registry, principal, Date.parse(first!) + RECORD_USE_EVERY_MS + 1);
    expect(Date.parse((await lastUsed())!)).toBe(Date.parse(first!) + RECORD_USE_EVERY_MS + 1);
  });

  it('never writes last use on a read-only registry', async () => {
    const t = await createToken(h.registry, { user: 'ro', role: 'reader', createdBy: 'root' });
    const ro = await openRegistry(h.registry.path, { readonly: true });
    try {
      await recordTokenUse(ro, (await authenticateToken(ro, t.token))!);
    } finally {
      await ro.close();
    }
    expect((await listTokens(h.registry)).find((x) => x.id === t.id)!.last_used_at).toBeNull();
  });
});

describe('migration of a registry made before tokens could expire', () => {
  it('keeps its tokens working, with no expiry', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'nkledger-token-mig-'));
    try {
      const sqlite = databaseAtMigration(dir, 'old.db', 7);
      const secret = 'nkl_old-token-from-before-expiry';
      sqlite
        .prepare(
          "INSERT INTO api_tokens (id, user, role, token_sha256, created_at, created_by) VALUES ('tok_000000000001', 'ada', 'approver', ?, '2025-01-01T00:00:00.000Z', 'root')",
        )
        .run(sha256Hex(secret));
      sqlite.close();
      const registry = await openRegistry(join(dir, 'old.db'));
      try {
        expect(await listTokens(registry)).toMatchObject([{ id: 'tok_000000000001', expires_at: null, expired: false, last_used_at: null }]);
        expect(await authenticateToken(registry, secret)).toMatchObject({ user: 'ada', role: 'approver', expiresAt: null });
        expect((await verifyRegistry(registry)).ok).toBe(true);
      } finally {
        await registry.close();
      }
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
