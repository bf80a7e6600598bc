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
  approvedGlass(h);
  await h.request('/api/v1/materials', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ slug: 'film', name: 'Film' }), as: 'editor' });
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
    const noBoundary = await h.request('/api/v1/fit', { method: 'POST', headers: { 'content-type': 'multipart/form-data' }, body: 'x', as: 'reader' });
    await expectProblem(noBoundary, 400, 'upload-multipart');
    expect(faults).toEqual([]);
    expect(snapshotCounts(h)).toEqual(before);
  });
});
