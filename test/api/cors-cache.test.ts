/**
 * CORS allow-list (Fetch standard CORS protocol: Access-Control-Allow-Origin only for listed origins,
 * preflight answered), the in-memory cache of rendered n,k answers (a retirement after caching must
 * show at once), the representation cache's LRU bound, and a graceful close that lets an in-flight
 * request finish.
 */
import { rmSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createMaterial } from '../../src/service/materials.ts';
import { retire } from '../../src/service/lifecycle.ts';
import { RepresentationCache } from '../../src/api/representation-cache.ts';
import { approvedGlass, csvTable, startHarness, type ApiHarness } from './harness.ts';

describe('CORS allow-list', () => {
  let h: ApiHarness;
  beforeAll(async () => {
    h = await startHarness({ settings: { cors_origins: ['https://design.example.org'] } });
  });
  afterAll(() => h.stop());

  it('echoes an allowed origin and exposes ETag, Location and Deprecation', async () => {
    const res = await h.request('/api/v1/materials', { headers: { origin: 'https://design.example.org' } });
    expect(res.headers.get('access-control-allow-origin')).toBe('https://design.example.org');
    expect(res.headers.get('access-control-expose-headers')).toMatch(/ETag.*Location.*Deprecation/);
    expect(res.headers.get('vary')).toMatch(/Origin/);
  });

  it('gives n,k answers to an allowed origin its CORS headers, rendered afresh and from the cache alike', async () => {
    await approvedGlass(h, 'cors-glass');
    const path = '/api/v1/materials/cors-glass/versions/1/nk?wavelengths_nm=550';
    for (const pass of ['rendered', 'cached']) {
      const res = await h.request(path, { headers: { origin: 'https://design.example.org' } });
      expect(res.status, pass).toBe(200);
      expect(res.headers.get('access-control-allow-origin'), pass).toBe('https://design.example.org');
      expect(res.headers.get('access-control-expose-headers'), pass).toMatch(/ETag/);
      expect(res.headers.get('vary'), pass).toMatch(/Origin/);
      expect(res.headers.get('vary'), pass).toMatch(/Accept/);
      expect(res.headers.get('etag'), pass).toMatch(/^"[0-9a-f]{64}\.approved\.json"$/);
    }
    const script = await h.request(path);
    expect(script.headers.get('access-control-allow-origin')).toBeNull();
    expect(script.headers.get('vary')).toBe('Origin, Accept');
  });

  it('gives no Access-Control-Allow-Origin to an origin not on the list', async () => {
    const res = await h.request('/api/v1/materials', { headers: { origin: 'https://evil.example.com' } });
    expect(res.status).toBe(200);
    expect(res.headers.get('access-control-allow-origin')).toBeNull();
  });

  it('answers a preflight for an allowed origin with the methods and headers a design tool needs', async () => {
    const res = await h.request('/api/v1/materials/x/versions', {
      method: 'OPTIONS',
      headers: {
        origin: 'https://design.example.org',
        'access-control-request-method': 'POST',
        'access-control-request-headers': 'authorization,content-type',
      },
    });
    expect(res.status).toBe(204);
    expect(res.headers.get('access-control-allow-origin')).toBe('https://design.example.org');
    expect(res.headers.get('access-control-allow-methods')).toMatch(/POST/);
    expect(res.headers.get('access-control-allow-headers')).toMatch(/Authorization/);
  });
});

describe('cached n,k answers', () => {
  let h: ApiHarness;
  beforeAll(async () => {
    h = await startHarness();
    await approvedGlass(h);
  });
  afterAll(() => h.stop());

  it("shows a retirement made after the answer was cached, through the server's own registry handle (other processes: registry-changes.test.ts)", async () => {
    const path = '/api/v1/materials/glass/versions/1/nk?wavelengths_nm=500';
    const first = await (await h.request(path)).json();
    const second = await (await h.request(path)).json();
    expect(second).toEqual(first);
    expect(first.warnings).toEqual([]);
    await retire(h.registry, 'glass@1', 'reference wafer broken', 'lab-approver'); // in the registry, not through the API
    const after = await h.request(path);
    expect(after.headers.get('deprecation')).toMatch(/^@\d+$/);
    const body = await after.json();
    expect(body.status).toBe('retired');
    expect(body.warnings.join(' ')).toMatch(/reference wafer broken/);
    expect(body.n).toEqual(first.n);
  });
});

describe('RepresentationCache', () => {
  it('drops the least recently used entries beyond its bound and refuses entries rendered under another status', () => {
    const cache = new RepresentationCache(2);
    const entry = (body: string) => ({ status: 'approved' as const, headers: { 'content-type': 'text/plain' }, body });
    cache.set('one', entry('1'));
    cache.set('two', entry('2'));
    expect(cache.get('one', 'approved')?.body).toBe('1'); // "one" is now the most recent
    cache.set('three', entry('3'));
    expect(cache.size).toBe(2);
    expect(cache.get('two', 'approved')).toBeUndefined();
    expect(cache.get('one', 'retired')).toBeUndefined();
    expect(cache.get('three', 'approved')?.body).toBe('3');
  });
});

describe('graceful close', () => {
  it('lets an in-flight upload finish, then refuses new connections', async () => {
    const h = await startHarness();
    await createMaterial(h.registry, { slug: 'slow', name: 'Slow' }, 'lab-editor');
    // A request whose body arrives in two parts, so it is in flight when close() starts.
    const text = csvTable(1.7);
    let push!: (s: string) => void;
    let end!: () => void;
    const body = new ReadableStream<Uint8Array>({
      start(controller) {
        push = (s) => controller.enqueue(new TextEncoder().encode(s));
        end = () => controller.close();
      },
    });
    push(text.slice(0, 100));
    const pending = h.request('/api/v1/materials/slow/versions', {
      method: 'POST',
      headers: { 'content-type': 'text/csv' },
      body,
      as: 'editor',
      // @ts-expect-error Node's fetch needs duplex for a streamed body
      duplex: 'half',
    });
    await new Promise((r) => setTimeout(r, 100));
    const closed = h.server.close();
    push(text.slice(100));
    end();
    const res = await pending;
    expect(res.status).toBe(201);
    await closed;
    await expect(fetch(`${h.url}/api/v1/materials`)).rejects.toThrow();
    await h.registry.close();
    rmSync(h.dir, { recursive: true, force: true });
  });
});
