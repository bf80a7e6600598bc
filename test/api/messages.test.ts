/** API refusals a first-time client reads: missing and unknown fields, missing token, a material without versions. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createMaterial } from '../../src/service/registry.ts';
import { csv, csvTable, json, startHarness, type ApiHarness } from './harness.ts';

let h: ApiHarness;
beforeAll(async () => {
  h = await startHarness();
  await createMaterial(h.registry, { slug: 'tio2-ebeam', name: 'E-beam TiO2' }, 'ada');
});
afterAll(() => h.stop());

const detail = async (res: Response) => ((await res.json()) as { detail: string }).detail;

describe('API messages', () => {
  it('a version of a material without versions: "no versions yet"', async () => {
    const res = await h.request('/api/v1/materials/tio2-ebeam/versions/1');
    expect(res.status).toBe(404);
    expect(await detail(res)).toMatch(/^tio2-ebeam has no version 1: it has no versions yet/);
  });

  it('a missing query field is "required", named where it belongs (the query string of a text/csv upload)', async () => {
    const res = await h.request('/api/v1/fit', csv(csvTable()));
    expect(res.status).toBe(400);
    expect(await detail(res)).toBe('query.model: required [invalid-query]');
  });

  it('an unknown JSON field lists the known ones', async () => {
    const res = await h.request('/api/v1/materials', { ...json({ slug: 'x', name: 'X', colour: 'red' }), as: 'editor' });
    expect(res.status).toBe(422);
    expect(await detail(res)).toBe('body: unknown field "colour" (known: slug, name, description, tags) [invalid-body]');
  });

  it('a write without a token says which role it needs and how to get a token', async () => {
    const res = await h.request('/api/v1/materials', json({ slug: 'x', name: 'X' }));
    expect(res.status).toBe(401);
    expect(await detail(res)).toMatch(
      /needs a bearer token with role editor or above \(an admin makes one with `nkledger token create --user NAME --role editor`\)/,
    );
  });
});
