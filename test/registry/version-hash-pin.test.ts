/**
 * The hashed layout of a version, pinned: a version stored through the service gets the SHA-256 that
 * scripts/make-version-hash-pins.py computes independently (Python json + hashlib over the layout written
 * in DEVELOPERS.md), and reading it back re-verifies to the same value. Dropping, renaming or adding a
 * hashed field (a provenance field such as notes, a table column) changes the hash and fails here.
 * One pin per layout; a new layout adds a pin and never edits an old one.
 */
import { readFileSync } from 'node:fs';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { VERSION_HASH_LAYOUT, versionSha256 } from '../../src/registry/records.ts';
import { createMaterial, importVersion, showVersion, verifyRegistry } from '../../src/service/registry.ts';
import type { Provenance } from '../../src/registry/types.ts';
import type { NkTable } from '../../src/table.ts';
import { tempRegistry, type TempRegistry } from './helpers.ts';

interface Pin {
  layout: string;
  table: NkTable;
  provenance: Provenance;
  sha256: string;
}
const pins = JSON.parse(readFileSync(new URL('../reference/version-hash-pins.json', import.meta.url), 'utf8')).pins as Record<string, Pin>;

describe('version SHA-256 pinned per hashed layout (reference: Python json + hashlib, scripts/make-version-hash-pins.py)', () => {
  let t: TempRegistry;
  beforeEach(async () => {
    t = await tempRegistry();
  });
  afterEach(() => t.cleanup());

  it('has one pin for every layout up to the one in force', () => {
    expect(Object.keys(pins).sort()).toEqual(Array.from({ length: VERSION_HASH_LAYOUT }, (_, i) => String(i + 1)));
    for (const pin of Object.values(pins)) expect(pin.sha256).toMatch(/^[0-9a-f]{64}$/);
  });

  it(`layout ${VERSION_HASH_LAYOUT}: importing the pinned table and provenance stores the pinned hash, and reading re-verifies it`, async () => {
    const pin = pins[String(VERSION_HASH_LAYOUT)];
    expect(Object.values(pin.provenance).every((v) => v !== null)).toBe(true); // every field present, so each one counts
    await createMaterial(t.registry, { slug: 'mgf2-ebeam', name: 'MgF2, e-beam' }, 'ada');
    const imported = await importVersion(t.registry, { slug: 'mgf2-ebeam', table: pin.table, provenance: pin.provenance }, 'ada');
    expect(imported.sha256).toBe(pin.sha256);
    const shown = await showVersion(t.registry, imported.ref);
    expect(shown.sha256).toBe(pin.sha256);
    expect(await verifyRegistry(t.registry)).toMatchObject({ ok: true, checked_versions: 1, mismatches: [] });
  });

  it('the pin moves when any hashed field does (so the pin is what protects the layout)', () => {
    const pin = pins[String(VERSION_HASH_LAYOUT)];
    const content = { table: pin.table, fit: null, kk: null };
    expect(versionSha256(content, pin.provenance)).toBe(pin.sha256);
    expect(versionSha256(content, { ...pin.provenance, notes: null })).not.toBe(pin.sha256);
    expect(versionSha256({ ...content, table: { ...pin.table, sigmaK: undefined } }, pin.provenance)).not.toBe(pin.sha256);
  });
});
