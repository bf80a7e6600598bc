/**
 * The n,k route through real HTTP. Expected numbers come from outside the API: for a table-only version,
 * linear interpolation by hand between the stored rows (common practice); for a model-backed version,
 * the Cauchy formula n = A + B/λ² + C/λ⁴ (λ in µm; textbook form, Fujiwara 2007 ch. 5) evaluated here
 * with the fitted parameters the API itself reports.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createMaterial } from '../../src/service/materials.ts';
import { importVersion } from '../../src/service/versions.ts';
import { approve, retire } from '../../src/service/lifecycle.ts';
import { csv, csvTable, snapshotCounts, startHarness, type ApiHarness } from './harness.ts';
import { cauchyTable } from '../registry/helpers.ts';

describe('GET .../versions/{n}/nk', () => {
  let h: ApiHarness;
  let fittedPath: string;
  beforeAll(async () => {
    h = await startHarness({ settings: { max_nk_points: 500 } });
    await createMaterial(h.registry, { slug: 'glass', name: 'Test glass' }, 'lab-editor');
    await importVersion(h.registry, { slug: 'glass', table: cauchyTable(1.45, 0.0036) }, 'lab-editor'); // v1, table only
    await approve(h.registry, 'glass@1', 'lab-approver');
    const up = await h.request('/api/v1/materials/glass/versions?fit=cauchy', { ...csv(csvTable(1.5)), as: 'editor' });
    expect(up.status, await up.clone().text()).toBe(201);
    fittedPath = (up.headers.get('location') as string) + '/nk';
    await importVersion(h.registry, { slug: 'glass', table: cauchyTable(1.46, 0.0036) }, 'lab-editor'); // v3
    await approve(h.registry, 'glass@3', 'lab-approver');
    await retire(h.registry, 'glass@3', 'mislabelled sample', 'lab-approver');
  });
  afterAll(() => h.stop());

  it('interpolates a table-only version at a list of wavelengths (JSON)', async () => {
    const res = await h.request('/api/v1/materials/glass/versions/1/nk?wavelengths_nm=425,650');
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toMatch(/^application\/json/);
    const body = await res.json();
    expect(body.wavelength_nm).toEqual([425, 650]);
    const t = cauchyTable(1.45, 0.0036);
    // 425 nm lies halfway between the 400 and 450 nm rows; 650 nm is a row.
    expect(body.n[0]).toBeCloseTo((t.n[0] + t.n[1]) / 2, 12);
    expect(body.n[1]).toBeCloseTo(t.n[5], 12);
    expect(body.k).toEqual([0, 0]);
    expect(body).toMatchObject({ ref: 'glass@1', source: 'table' });
  });

  it('evaluates a range from_nm/to_nm/step_nm', async () => {
    const body = await (await h.request('/api/v1/materials/glass/versions/1/nk?from_nm=400&to_nm=800&step_nm=50')).json();
    expect(body.wavelength_nm).toEqual([400, 450, 500, 550, 600, 650, 700, 750, 800]);
    expect(body.n).toEqual(cauchyTable(1.45, 0.0036).n.map((v) => expect.closeTo(v, 12)));
  });

  it('evaluates a model-backed version with the fitted model (Cauchy formula by hand)', async () => {
    const res = await h.request(`${fittedPath}?wavelengths_nm=532,632.8`);
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body.source).toBe('model');
    const version = await (await h.request(fittedPath.replace(/\/nk$/, ''))).json();
    const p = version.content.fit.parameters;
    const names = Object.keys(p);
    expect(names).toEqual(expect.arrayContaining(['A', 'B']));
    const cauchy = (nm: number) => {
      const um = nm / 1000;
      return p.A.value + p.B.value / um ** 2 + (p.C ? p.C.value / um ** 4 : 0);
    };
    expect(body.n[0]).toBeCloseTo(cauchy(532), 10);
    expect(body.n[1]).toBeCloseTo(cauchy(632.8), 10);
  });

  it('answers CSV when Accept prefers text/csv, JSON otherwise; 406 for neither', async () => {
    const path = '/api/v1/materials/glass/versions/1/nk?wavelengths_nm=450,650';
    const res = await h.request(path, { headers: { accept: 'text/csv' } });
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toMatch(/^text\/csv/);
    expect(res.headers.get('vary')).toMatch(/Accept/);
    const lines = (await res.text()).trim().split(/\r\n/);
    expect(lines[0]).toBe('wavelength_nm,n,k');
    expect(lines.length).toBe(3);
    expect(Number(lines[1].split(',')[1])).toBeCloseTo(cauchyTable(1.45, 0.0036).n[1], 12);
    const prefersJson = await h.request(path, { headers: { accept: 'text/csv;q=0.5, application/json' } });
    expect(prefersJson.headers.get('content-type')).toMatch(/^application\/json/);
    const neither = await h.request(path, { headers: { accept: 'image/png' } });
    expect(neither.status).toBe(406);
    expect(neither.headers.get('content-type')).toBe('application/problem+json');
  });

  it('caches approved answers per format (ETag of content and status, a minute), 304 on If-None-Match', async () => {
    const path = '/api/v1/materials/glass/versions/1/nk?wavelengths_nm=500';
    const json = await h.request(path);
    const csvRes = await h.request(path, { headers: { accept: 'text/csv' } });
    const etag = json.headers.get('etag');
    expect(etag).toMatch(/^"[0-9a-f]{64}\.approved\.json"$/);
    expect(csvRes.headers.get('etag')).toMatch(/^"[0-9a-f]{64}\.approved\.csv"$/);
    expect(json.headers.get('cache-control')).toBe('public, max-age=60');
    expect(json.headers.get('vary')).toBe('Origin, Accept');
    const again = await h.request(path, { headers: { 'if-none-match': etag! } });
    expect(again.status).toBe(304);
    // RFC 9110 §15.4.5: a 304 carries the validators and caching headers a 200 would have had.
    expect(again.headers.get('etag')).toBe(etag);
    expect(again.headers.get('cache-control')).toBe('public, max-age=60');
    expect(again.headers.get('vary')).toBe('Origin, Accept');
    expect(await again.text()).toBe('');
    // With a token the same answer is private (RFC 9111 §3.5), rendered and cached apart from the anonymous one.
    for (let i = 0; i < 2; i++) {
      const withToken = await h.request(path, { as: 'reader' });
      expect(withToken.headers.get('cache-control')).toBe('private, max-age=60');
      expect(withToken.headers.get('etag')).toBe(etag);
    }
    expect((await h.request(path)).headers.get('cache-control')).toBe('public, max-age=60');
  });

  it('a retirement changes the ETag: a client revalidating the approved answer gets the retired one, cacheable for good', async () => {
    await createMaterial(h.registry, { slug: 'etag-glass', name: 'Glass' }, 'lab-editor');
    await importVersion(h.registry, { slug: 'etag-glass', table: cauchyTable(1.49, 0.0041) }, 'lab-editor');
    await approve(h.registry, 'etag-glass@1', 'lab-approver');
    const paths = ['/api/v1/materials/etag-glass/versions/1/nk?wavelengths_nm=500', '/api/v1/materials/etag-glass/versions/1'];
    const etags: string[] = [];
    for (const path of paths) {
      const approved = await h.request(path);
      etags.push(approved.headers.get('etag')!);
      expect((await h.request(path, { headers: { 'if-none-match': etags.at(-1)! } })).status).toBe(304);
    }
    await retire(h.registry, 'etag-glass@1', 'superseded', 'lab-approver');
    for (const [i, path] of paths.entries()) {
      const after = await h.request(path, { headers: { 'if-none-match': etags[i] } });
      expect(after.status, path).toBe(200);
      expect(after.headers.get('etag')).not.toBe(etags[i]);
      expect(after.headers.get('etag')).toMatch(/\.retired/);
      expect(after.headers.get('deprecation')).toMatch(/^@\d+$/);
      expect(after.headers.get('cache-control')).toBe('public, max-age=31536000, immutable');
    }
  });

  it('marks a retired version deprecated and warns; a draft is no-store', async () => {
    const retired = await h.request('/api/v1/materials/glass/versions/3/nk?wavelengths_nm=500');
    expect(retired.status).toBe(200);
    expect(retired.headers.get('deprecation')).toMatch(/^@\d+$/);
    expect((await retired.json()).warnings.join(' ')).toMatch(/retired/);
    await importVersion(h.registry, { slug: 'glass', table: cauchyTable(1.47, 0.0036) }, 'lab-editor'); // v4 draft
    const draft = await h.request('/api/v1/materials/glass/versions/4/nk?wavelengths_nm=500');
    expect(draft.headers.get('cache-control')).toBe('no-store');
    expect(draft.headers.get('etag')).toBeNull();
  });

  it('refuses bad wavelength requests with problem documents, writing nothing', async () => {
    const before = snapshotCounts(h);
    const cases: [string, number, RegExp][] = [
      ['', 400, /one of wavelengths_nm/],
      ['?wavelengths_nm=450&from_nm=400&to_nm=500&step_nm=10', 400, /give one of/],
      ['?wavelengths_nm=450,abc', 400, /abc/],
      ['?from_nm=400&to_nm=800', 400, /all of/],
      ['?from_nm=800&to_nm=400&step_nm=10', 400, /from_nm ≤ to_nm/],
      ['?from_nm=400&to_nm=800&step_nm=0.1', 400, /4001 wavelengths.*at most 500/],
      ['?wavelengths_nm=300', 400, /outside|range/],
      ['?wavelengths_nm=500&colour=red', 400, /colour/],
    ];
    for (const [query, status, detail] of cases) {
      const res = await h.request(`/api/v1/materials/glass/versions/1/nk${query}`);
      expect(res.status, query).toBe(status);
      expect(res.headers.get('content-type')).toBe('application/problem+json');
      expect((await res.json()).detail, query).toMatch(detail);
    }
    expect((await h.request(`${fittedPath}?wavelengths_nm=1500`)).status).toBe(400);
    expect((await h.request('/api/v1/materials/glass/versions/9/nk?wavelengths_nm=500')).status).toBe(404);
    expect(snapshotCounts(h)).toEqual(before);
  });
});
