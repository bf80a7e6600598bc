/**
 * The server remembers token principals and version statuses until the registry changes
 * (src/api/registry-changes.ts). These tests pin when a change shows: a write through the server's own
 * connection at once, a commit by another connection from the next turn of the event loop, and a
 * revocation or retirement by another process (the CLI) at the very next request.
 */
import { cli as runCli } from '../reliability/processes.ts';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openRegistry } from '../../src/registry/open.ts';
import { createMaterial } from '../../src/service/materials.ts';
import { createToken, revokeToken } from '../../src/service/tokens.ts';
import { ChangeMemo, RegistryChanges } from '../../src/api/registry-changes.ts';
import { approvedGlass, startHarness, type ApiHarness } from './harness.ts';

const nextTurn = () => new Promise((resolve) => setImmediate(resolve));

let h: ApiHarness;
beforeAll(async () => {
  h = await startHarness();
  await approvedGlass(h);
});
afterAll(() => h.stop());

describe('RegistryChanges and ChangeMemo', () => {
  it('keep a value while nothing changes and drop it at once after a write on the same connection', async () => {
    const changes = new RegistryChanges(h.registry);
    const memo = new ChangeMemo<number>(changes);
    let computed = 0;
    const value = () => memo.get('key', async () => ++computed);
    expect([await value(), await value(), await value()]).toEqual([1, 1, 1]);
    await createMaterial(h.registry, { slug: 'same-connection', name: 'Written in this turn' }, 'lab-editor');
    expect(await value()).toBe(2);
    expect(await value()).toBe(2);
  });

  it('see a commit by another connection from the next turn of the event loop', async () => {
    const changes = new RegistryChanges(h.registry);
    const memo = new ChangeMemo<number>(changes);
    let computed = 0;
    const value = () => memo.get('key', async () => ++computed);
    expect(await value()).toBe(1);
    await nextTurn();
    expect(await value()).toBe(1);
    const other = await openRegistry(h.registry.path);
    try {
      await createMaterial(other, { slug: 'other-connection', name: 'Written elsewhere' }, 'lab-editor');
    } finally {
      await other.close();
    }
    await nextTurn();
    expect(await value()).toBe(2);
  });

  it('do not keep a value whose computation saw the registry change, nor a failed one', async () => {
    const memo = new ChangeMemo<number>(new RegistryChanges(h.registry));
    let computed = 0;
    const racing = async () => {
      await createMaterial(h.registry, { slug: `during-${computed}`, name: 'Written while computing' }, 'lab-editor');
      return ++computed;
    };
    expect(await memo.get('key', racing)).toBe(1);
    expect(await memo.get('key', async () => ++computed)).toBe(2);
    expect(await memo.get('key', async () => ++computed)).toBe(2);
    await expect(memo.get('failing', async () => Promise.reject(new Error('lookup failed')))).rejects.toThrow('lookup failed');
    expect(await memo.get('failing', async () => 7)).toBe(7);
  });

  it('hold at most maxEntries values, so client-chosen keys cannot grow it', async () => {
    const memo = new ChangeMemo<string>(new RegistryChanges(h.registry), 3);
    for (let i = 0; i < 100; i++) await memo.get(`token-${i}`, async () => 'unknown');
    let recomputed = false;
    await memo.get('token-0', async () => ((recomputed = true), 'unknown'));
    expect(recomputed).toBe(true);
    expect(memo.size).toBeLessThanOrEqual(3);
  });
});

describe('changes by another process show at the next request', () => {
  // Asynchronously: the server lives in this process, and a synchronous child would stall it past
  // its keep-alive timeout on a loaded machine (the next fetch then meets a closed socket).
  const cli = async (...args: string[]) => {
    const r = await runCli([...args, '--db', h.registry.path, '--as', 'lab-admin'], 'lab-admin');
    return { status: r.code, stderr: r.err, stdout: r.out };
  };

  it('a token revoked with `nkledger token revoke` is refused right after', async () => {
    const t = await createToken(h.registry, { user: 'design-tool', role: 'reader', createdBy: 'setup' });
    const path = '/api/v1/materials/glass/versions/1/nk?wavelengths_nm=550';
    for (let i = 0; i < 3; i++) expect((await h.request(path, { token: t.token })).status).toBe(200);
    const revoked = await cli('token', 'revoke', t.id);
    expect(revoked.status, revoked.stderr).toBe(0);
    const res = await h.request(path, { token: t.token });
    expect(res.status).toBe(401);
    expect(res.headers.get('content-type')).toBe('application/problem+json');
  });

  it("a token revoked through the server's own registry handle is refused right after", async () => {
    const t = await createToken(h.registry, { user: 'design-tool-2', role: 'reader', createdBy: 'setup' });
    expect((await h.request('/api/v1/materials', { token: t.token })).status).toBe(200);
    await revokeToken(h.registry, t.id, 'lab-admin');
    expect((await h.request('/api/v1/materials', { token: t.token })).status).toBe(401);
  });

  it('a version retired with `nkledger retire` is answered as retired right after, from the cached n,k answer', async () => {
    const path = '/api/v1/materials/glass/versions/1/nk?wavelengths_nm=450,650';
    const before = await h.request(path);
    expect(before.headers.get('deprecation')).toBeNull();
    expect((await before.json()).status).toBe('approved');
    const retired = await cli('retire', 'glass@1', '--reason', 'reference wafer cracked');
    expect(retired.status, retired.stderr).toBe(0);
    const after = await h.request(path);
    expect(after.headers.get('deprecation')).toMatch(/^@\d+$/);
    const body = await after.json();
    expect(body.status).toBe('retired');
    expect(body.warnings.join(' ')).toMatch(/reference wafer cracked/);
  });
});
