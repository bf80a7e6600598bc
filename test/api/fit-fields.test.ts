/** The HTTP fit fields are the CLI's fit flags (range_nm for --range; lists comma-separated), for POST /fit and uploads. */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createMaterial } from '../../src/service/registry.ts';
import { csv, csvTable, snapshotCounts, startHarness, type ApiHarness } from './harness.ts';

let h: ApiHarness;
beforeAll(async () => {
  h = await startHarness();
  await createMaterial(h.registry, { slug: 'sin-a', name: 'SiN' }, 'ada');
});
afterAll(() => h.stop());

describe('fit fields over HTTP', () => {
  it('POST /fit applies range_nm, fix and target', async () => {
    const res = await h.request('/api/v1/fit?model=cauchy&range_nm=450:750&fix=C=0,B=0.01&target=n', csv(csvTable()));
    expect(res.status).toBe(200);
    const { report } = await res.json();
    expect(report.range_nm).toEqual([450, 750]);
    expect(report.options).toMatchObject({ target: 'n', fixed: ['B', 'C'] });
    // csvTable is n = a + 0.01/λ² exactly (a = 1.9): with B fixed at its true value, A comes back (invented numbers).
    expect(report.parameters.A.value).toBeCloseTo(1.9, 6);
  });

  it('an upload with fit=MODEL stores the fit with the same fields; fit fields without fit= are refused, nothing written', async () => {
    const up = await h.request('/api/v1/materials/sin-a/versions?fit=cauchy&range_nm=400:700&kk=false', { ...csv(csvTable()), as: 'editor' });
    expect(up.status).toBe(201);
    const version = await (await h.request(`/api/v1/materials/sin-a/versions/${(await up.json()).ref.split('@')[1]}`)).json();
    expect(version.content.fit.range_nm).toEqual([400, 700]);
    const before = snapshotCounts(h);
    const orphan = await h.request('/api/v1/materials/sin-a/versions?range_nm=400:700', { ...csv(csvTable(1.8)), as: 'editor' });
    expect(orphan.status).toBe(400);
    expect((await orphan.json()).detail).toBe('range_nm configure a fit: add fit=MODEL [bad-option]');
    const bad = await h.request('/api/v1/materials/sin-a/versions?fit=cauchy&bounds=C=5:1', { ...csv(csvTable(1.8)), as: 'editor' });
    expect(bad.status).toBe(400);
    expect((await bad.json()).detail).toBe('bounds C 5:1: MIN must be below MAX [bad-option]');
    expect(snapshotCounts(h)).toEqual(before);
  });
});
