/**
 * Hostile or lax input at the HTTP front door: malformed multipart bodies, duplicate and
 * non-decimal query parameters, undecodable or control bytes in provenance, wrong content types on
 * JSON routes, over-long URLs. Each is a problem document (RFC 9457) that writes nothing and puts
 * no stack trace in the server's log.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { approvedGlass, csv, csvTable, snapshotCounts, startHarness, type ApiHarness } from './harness.ts';

let h: ApiHarness;
const faults: unknown[] = [];
beforeAll(async () => {
  h = await startHarness({ logFault: (err) => faults.push(err) });
  await approvedGlass(h);
  await h.request('/api/v1/materials', {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ slug: 'film', name: 'Film' }),
    as: 'editor',
  });
});
afterAll(() => h.stop());

async function expectProblem(res: Response, status: number, rule: string | RegExp) {
  expect(res.status).toBe(status);
  expect(res.headers.get('content-type')).toBe('application/problem+json');
  const body = await res.json();
  if (typeof rule === 'string') expect(body.rule).toBe(rule);
  else expect(body.rule).toMatch(rule);
  return body;
}

describe('malformed multipart bodies', () => {
  it('a garbage body under a multipart Content-Type is 400, logged as nothing', async () => {
    const before = snapshotCounts(h);
    for (const path of ['/api/v1/materials/film/versions', '/api/v1/fit', '/api/v1/kk']) {
      const res = await h.request(path, {
        method: 'POST',
        headers: { 'content-type': 'multipart/form-data; boundary=X' },
        body: 'garbage',
        as: 'editor',
      });
      const p = await expectProblem(res, 400, 'upload-multipart');
      expect(p.detail).toMatch(/multipart/);
    }
    const noBoundary = await h.request('/api/v1/fit', {
      method: 'POST',
      headers: { 'content-type': 'multipart/form-data' },
      body: 'x',
      as: 'reader',
    });
    await expectProblem(noBoundary, 400, 'upload-multipart');
    expect(faults).toEqual([]);
    expect(snapshotCounts(h)).toEqual(before);
  });
});

describe('lax input refused', () => {
  const nk = '/api/v1/materials/glass/versions/1/nk';

  it('a query parameter given twice is 400, on reads and uploads', async () => {
    await expectProblem(await h.request(`${nk}?wavelengths_nm=500&wavelengths_nm=600`), 400, 'query-duplicate');
    const before = snapshotCounts(h);
    await expectProblem(
      await h.request('/api/v1/materials/film/versions?sample=a&sample=b', { ...csv(csvTable()), as: 'editor' }),
      400,
      'query-duplicate',
    );
    expect(snapshotCounts(h)).toEqual(before);
  });

  it('hexadecimal and other non-decimal numbers are refused (one number grammar)', async () => {
    for (const q of ['wavelengths_nm=0x1F4', 'wavelengths_nm=0b111110100', 'wavelengths_nm=500,0o764', 'from_nm=0x190&to_nm=600&step_nm=10']) {
      const res = await h.request(`${nk}?${q}`);
      expect(res.status, q).toBe(400);
      expect(res.headers.get('content-type')).toBe('application/problem+json');
    }
    expect(faults).toEqual([]);
  });

  it('%ff, NUL and other control bytes in provenance are refused, nothing stored', async () => {
    const before = snapshotCounts(h);
    await expectProblem(await h.request('/api/v1/materials/film/versions?sample=%ff', { ...csv(csvTable()), as: 'editor' }), 400, 'query-encoding');
    await expectProblem(await h.request('/api/v1/materials/film/versions?sample=a%00b', { ...csv(csvTable()), as: 'editor' }), 400, 'query-control');
    const form = new FormData();
    form.set('table', new Blob([csvTable()], { type: 'text/csv' }), 'run.csv');
    form.set('sample', 'wafer\u00007');
    await expectProblem(await h.request('/api/v1/materials/film/versions', { method: 'POST', body: form, as: 'editor' }), 400, 'provenance-invalid');
    expect(snapshotCounts(h)).toEqual(before);
  });

  it('JSON routes refuse other content types with 415', async () => {
    const before = snapshotCounts(h);
    const body = JSON.stringify({ slug: 'plain', name: 'Plain' });
    for (const type of ['text/plain', 'application/x-www-form-urlencoded']) {
      await expectProblem(
        await h.request('/api/v1/materials', { method: 'POST', headers: { 'content-type': type }, body, as: 'editor' }),
        415,
        'body-media-type',
      );
    }
    await expectProblem(
      await h.request('/api/v1/locks/verify', { method: 'POST', headers: { 'content-type': 'text/plain' }, body: '{}' }),
      415,
      'body-media-type',
    );
    expect(snapshotCounts(h)).toEqual(before);
  });

  it('a URL over the header limit is a 431 problem document; the same list goes as POST …/nk with a JSON body', async () => {
    const list = Array.from({ length: 4000 }, (_, i) => (400 + i * 0.1).toFixed(1));
    const long = await h.request(`${nk}?wavelengths_nm=${list.join(',')}`);
    const p = await expectProblem(long, 431, 'request-too-long');
    expect(p.detail).toMatch(/POST .*\/nk/);
    const posted = await h.request(nk, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ wavelengths_nm: list.map(Number) }),
    });
    expect(posted.status).toBe(200);
    const answer = await posted.json();
    expect(answer.n.length).toBe(4000);
    const viaGet = await (await h.request(`${nk}?wavelengths_nm=450,550`)).json();
    const viaPost = await (
      await h.request(nk, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ wavelengths_nm: '450,550' }) })
    ).json();
    expect(viaPost.n).toEqual(viaGet.n);
    const tooMany = await h.request(nk, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ wavelengths_nm: Array(20_000).fill(500) }),
    });
    await expectProblem(tooMany, 400, 'nk-too-many-points');
  });
});
