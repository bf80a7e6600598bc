/**
 * Instrument exports through the service into a registry: the preamble and an absent k column in the stored
 * provenance (and hashes of versions without them unchanged), several files in one transaction, material edits.
 * Fixtures are INVENTED data of the Marrowick Optics demo lab.
 */
import { readFileSync } from 'node:fs';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { versionSha256 } from '../../src/registry/records.ts';
import { sha256Hex } from '../../src/registry/canonical.ts';
import { createMaterial, editMaterial, history, showVersion } from '../../src/service/registry.ts';
import { importMeasurement, importMeasurements } from '../../src/service/import-measurement.ts';
import { fitOptionsForAbsentK, kkCheck } from '../../src/service/absent-k.ts';
import { normalizeProvenance } from '../../src/service/provenance.ts';
import { BACKENDS, cauchyTable, tempRegistry, type TempRegistry } from './helpers.ts';

const fixture = (name: string) => new Uint8Array(readFileSync(new URL(`../fixtures/import/good/${name}`, import.meta.url)));
/** A 21-row export with a preamble (so the KK check can run); INVENTED numbers n = 1.45 + 0.0036/λ². */
function exportWithPreamble(offset = 0, withK = true): Uint8Array {
  const rows = Array.from({ length: 21 }, (_, i) => 400 + 20 * i).map(
    (w) => `${w},${(1.45 + offset + 0.0036 / (w / 1000) ** 2).toFixed(6)}${withK ? ',0.001' : ''}`,
  );
  const text = [
    'Marrowick Optics MO-SE 640 export',
    'Comment: INVENTED test data',
    'Sample: TA-0412',
    `Wavelength (nm),n${withK ? ',k' : ''}`,
    ...rows,
  ].join('\n');
  return new TextEncoder().encode(`${text}\n`);
}

describe.each(BACKENDS)('import exports on %s', (backend) => {
  let t: TempRegistry;
  beforeEach(async () => {
    t = await tempRegistry(backend);
    await createMaterial(t.registry, { slug: 'ta2o5', name: 'Ta2O5', tags: ['oxide'] }, 'ada');
  });
  afterEach(() => t.cleanup());

  describe('file provenance', () => {
    it("stores the preamble and the original bytes' name and SHA-256", async () => {
      const bytes = exportWithPreamble();
      const v = await importMeasurement(t.registry, { slug: 'ta2o5', bytes, file: 'runs/ta-0412.csv' }, 'ada');
      expect(v.preamble).toEqual(['Marrowick Optics MO-SE 640 export', 'Comment: INVENTED test data', 'Sample: TA-0412']);
      const shown = await showVersion(t.registry, v.ref);
      expect(shown.provenance).toMatchObject({ source_file: 'ta-0412.csv', source_sha256: sha256Hex(bytes), preamble: v.preamble });
      expect(shown.provenance.absent_columns).toBeUndefined();
    });

    it('a version without preamble or absent columns hashes as before the fields existed', () => {
      const p = normalizeProvenance({ sample: 'MW-1' });
      expect(Object.keys(p)).not.toContain('preamble');
      expect(Object.keys(p)).not.toContain('absent_columns');
      const content = { table: cauchyTable(), fit: null, kk: null };
      // The hashed document of an older version: the eleven fields, nothing else.
      expect(versionSha256(content, p)).toBe(versionSha256(content, { ...p, preamble: undefined }));
    });

    it('no k column: provenance says so, the KK answer is uninformative "no k column", an absorbing fit uses n only', async () => {
      const v = await importMeasurement(
        t.registry,
        { slug: 'ta2o5', bytes: exportWithPreamble(0, false), file: 'n-only.csv', fit: { model: 'tauc-lorentz' } },
        'ada',
      );
      expect(v.import_warnings).toEqual(
        expect.arrayContaining([expect.stringMatching(/^no k column/), expect.stringMatching(/tauc-lorentz fit uses n only/)]),
      );
      const shown = await showVersion(t.registry, v.ref);
      expect(shown.provenance.absent_columns).toEqual(['k']);
      expect(shown.content.kk).toMatchObject({ verdict: 'uninformative', reason: 'no k column' });
      expect((shown.content.fit as unknown as { options: { target: string } }).options.target).toBe('n');
      expect(kkCheck(cauchyTable(), {}, true)).toMatchObject({ verdict: 'uninformative', reason: 'no k column', points: 9 });
      expect(fitOptionsForAbsentK({ model: 'sellmeier' }, true).notices).toEqual([]); // transparent: k = 0 is its answer anyway
      expect(() => fitOptionsForAbsentK({ model: 'cauchy', target: 'k' }, true)).toThrow(/needs k/);
    });
  });

  describe('several files at once', () => {
    it('stores one draft per file with its own provenance', async () => {
      const files = [0, 0.01, 0.02].map((o, i) => ({
        slug: 'ta2o5',
        bytes: exportWithPreamble(o),
        file: `wafer-${i + 1}.csv`,
        provenance: { operator: 'R. Okafor' },
      }));
      const stored = await importMeasurements(t.registry, files, 'ada');
      expect(stored.map((s) => s.ref)).toEqual(['ta2o5@1', 'ta2o5@2', 'ta2o5@3']);
      expect((await showVersion(t.registry, 'ta2o5@3')).provenance).toMatchObject({ source_file: 'wafer-3.csv', operator: 'R. Okafor' });
    });

    it('is all or nothing: a refused file or a duplicate stores none', async () => {
      const good = { slug: 'ta2o5', bytes: exportWithPreamble(), file: 'a.csv' };
      const bad = { slug: 'ta2o5', bytes: new TextEncoder().encode('Wavelength (nm),n\n0.4,1.5\n0.5,1.5\n'), file: 'b.csv' };
      await expect(importMeasurements(t.registry, [good, bad], 'ada')).rejects.toThrow(/implausible|looks like µm/);
      await expect(importMeasurements(t.registry, [good, { ...good }], 'ada')).rejects.toThrow(/identical content/);
      await expect(importMeasurements(t.registry, [good, { ...good, bytes: exportWithPreamble(0.05), slug: 'nope' }], 'ada')).rejects.toThrow(
        /no material "nope"/,
      );
      expect((await history(t.registry, 'ta2o5')).versions).toHaveLength(0);
    });

    it('reads a fixture export (units row, trade names) like a single import', async () => {
      const [v] = await importMeasurements(
        t.registry,
        [{ slug: 'ta2o5', bytes: fixture('export-units-row-trade-names.csv'), file: 'x.csv', kk: false }],
        'ada',
      );
      expect((await showVersion(t.registry, v.ref)).content.table?.n).toEqual([1.52, 1.51, 1.5]);
    });
  });

  describe('material edit', () => {
    it('changes name, description and tags, keeps the slug, and writes one audit row', async () => {
      const e = await editMaterial(t.registry, 'ta2o5', { name: 'Ta2O5, ion-assisted', addTags: ['ias'], removeTags: ['oxide'] }, 'bob');
      expect(e).toMatchObject({ slug: 'ta2o5', name: 'Ta2O5, ion-assisted', tags: ['ias'], changed: ['name', 'tags'] });
      const audit = (await history(t.registry, 'ta2o5')).audit.at(-1)!;
      expect(audit).toMatchObject({
        actor: 'bob',
        action: 'material.edit',
        detail: { slug: 'ta2o5', name: { from: 'Ta2O5', to: 'Ta2O5, ion-assisted' } },
      });
      expect((await editMaterial(t.registry, 'ta2o5', { tags: ['ias'] }, 'bob')).changed).toEqual([]);
      expect((await history(t.registry, 'ta2o5')).audit.filter((a) => a.action === 'material.edit')).toHaveLength(1);
      await expect(editMaterial(t.registry, 'ta2o5', {}, 'bob')).rejects.toThrow(/nothing to change/);
      await expect(editMaterial(t.registry, 'ta2o5', { removeTags: ['nope'] }, 'bob')).rejects.toThrow(/no tag "nope"/);
      await expect(editMaterial(t.registry, 'ta2o5', { name: ' ' }, 'bob')).rejects.toThrow(/display name/);
    });
  });
});
