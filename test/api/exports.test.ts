/**
 * The API side of issue 12: upload refusals carry remedies worded as fields, nk answers at=…&unit=eV and
 * extrapolate=true, PATCH of a material. Data: invented tables of test/api/harness.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createMaterial } from '../../src/service/materials.ts';
import { csv, csvTable, json, snapshotCounts, startHarness, type ApiHarness } from './harness.ts';

describe('API: exports, units and extrapolation, material edit', () => {
  let h: ApiHarness;
  let fitted: string;
  beforeAll(async () => {
    h = await startHarness();
    await createMaterial(h.registry, { slug: 'film', name: 'Film', tags: ['oxide'] }, 'lab-editor');
    const up = await h.request('/api/v1/materials/film/versions?fit=cauchy&kk=false', { ...csv(csvTable(1.6)), as: 'editor' });
    expect(up.status, await up.clone().text()).toBe(201);
    fitted = `${up.headers.get('location')}/nk`;
  });
  afterAll(() => h.stop());

  it('refuses µm numbers under a nm header as a problem document naming the field that fixes it', async () => {
    const before = snapshotCounts(h);
    const res = await h.request('/api/v1/materials/film/versions', {
      ...csv('Sample: TA-0412\nWavelength (nm),n,k\n0.4,1.5,0\n0.5,1.5,0\n'),
      as: 'editor',
    });
    expect(res.status).toBe(400);
    const p = await res.json();
    expect(p).toMatchObject({
      rule: 'implausible-range',
      line: 3,
      column: 1,
      remedies: [{ option: 'input_unit', value: 'um' }, { option: 'allow_any_range' }],
    });
    expect(p.detail).toMatch(/looks like µm: use input_unit=um or allow_any_range=true \[implausible-range\]$/);
    expect(snapshotCounts(h)).toEqual(before);
  });

  it('evaluates at points in eV and adds the energy_eV column; extrapolate=true marks values beyond the range', async () => {
    const inEv = await (await h.request(`${fitted}?at=2,2.5&unit=eV`)).json();
    expect(inEv.energy_eV).toEqual([2, 2.5]);
    expect(inEv.wavelength_nm[0]).toBeCloseTo(619.920992, 6);
    expect((await h.request(`${fitted}?wavelengths_nm=350`)).status).toBe(400);
    const x = await (await h.request(`${fitted}?wavelengths_nm=350,500&extrapolate=true`)).json();
    expect(x.extrapolated).toEqual([true, false]);
    expect(x.warnings.at(-1)).toMatch(/1 value\(s\) extrapolated beyond the cauchy model's validity range/);
  });

  it('PATCH edits name and tags (editor), keeps the slug and logs material.edit', async () => {
    const patch = (body: unknown, as: 'editor' | 'reader') => h.request('/api/v1/materials/film', { ...json(body), method: 'PATCH', as });
    expect((await patch({ name: 'x' }, 'reader')).status).toBe(403);
    const res = await patch({ name: 'Film, annealed', tags: ['oxide', 'annealed'] }, 'editor');
    expect(res.status).toBe(200);
    expect(await res.json()).toMatchObject({ slug: 'film', name: 'Film, annealed', tags: ['annealed', 'oxide'], changed: ['name', 'tags'] });
    expect((await patch({ slug: 'other' }, 'editor')).status).toBe(422); // the slug is not an editable field
    expect(h.count('audit_log')).toBeGreaterThan(0);
  });
});
