/**
 * Listing a material's versions reads only a summary of each content out of SQLite (registry/records.ts
 * versionSummaryRows); the records must equal those built from the whole parsed content.
 */
import { afterAll, beforeAll, expect, it } from 'vitest';
import { versionRecord, type VersionRow } from '../../src/registry/records.ts';
import { getMaterial, history, createMaterial } from '../../src/service/materials.ts';
import { importVersion } from '../../src/service/versions.ts';
import { importMeasurement } from '../../src/service/import-measurement.ts';
import { cauchyTable, tempRegistry, type TempRegistry } from './helpers.ts';

let temp: TempRegistry;
beforeAll(async () => {
  temp = await tempRegistry();
  const r = temp.registry;
  await createMaterial(r, { slug: 'mix', name: 'Mixed contents' }, 'ada');
  await importVersion(r, { slug: 'mix', table: cauchyTable() }, 'ada'); // table only, no KK report
  const rows = Array.from({ length: 30 }, (_, i) => `${400 + 10 * i},${(1.45 + 0.0036 / ((400 + 10 * i) / 1000) ** 2).toFixed(6)}`);
  const bytes = new TextEncoder().encode(['wavelength_nm,n', ...rows].join('\n'));
  await importMeasurement(r, { slug: 'mix', bytes, file: 'n-only.csv', fit: { model: 'cauchy', rangeNm: [450, 650] } }, 'ada'); // model over a narrower range, KK
});
afterAll(() => temp.cleanup());

it('the listed records equal the records of the whole content', async () => {
  const full = temp.registry.sqlite.prepare('SELECT * FROM material_versions ORDER BY number').all() as Record<string, unknown>[];
  const expected = full.map((raw) => {
    const row = Object.fromEntries(
      Object.entries(raw).map(([k, v]) => [k.replace(/_([a-z0-9])/g, (_, c) => c.toUpperCase()), v]),
    ) as unknown as VersionRow;
    return versionRecord('mix', { ...row, selfApproved: raw.self_approved === null ? null : raw.self_approved === 1 } as VersionRow);
  });
  expect((await getMaterial(temp.registry, 'mix')).versions).toEqual(expected);
  expect((await history(temp.registry, 'mix')).versions).toEqual(expected);
  expect(expected[1].range_nm).toEqual([450, 650]);
  expect(expected[0].kk_verdict).toBeNull();
});
