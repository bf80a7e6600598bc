/** Shared fixtures for registry tests: a registry in a fresh temp directory and a small n,k table. */
import Database from 'better-sqlite3';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import { migrate } from 'drizzle-orm/better-sqlite3/migrator';
import { cpSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { MIGRATIONS_FOLDER } from '../../src/registry/open.ts';
import { createMaterial, importVersion, openRegistry, type Registry } from '../../src/service/registry.ts';
import type { NkTable } from '../../src/table.ts';

export interface TempRegistry {
  dir: string;
  path: string;
  registry: Registry;
  cleanup(): void;
}

export async function tempRegistry(): Promise<TempRegistry> {
  const dir = mkdtempSync(join(tmpdir(), 'nkledger-reg-'));
  const path = join(dir, 'test.db');
  const registry = await openRegistry(path);
  return {
    dir,
    path,
    registry,
    cleanup() {
      registry.close();
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** A temp registry holding material "film" with one draft version (cauchyTable), created by "ada". */
export async function tempRegistryWithDraft(): Promise<TempRegistry> {
  const t = await tempRegistry();
  await createMaterial(t.registry, { slug: 'film', name: 'Film' }, 'ada');
  await importVersion(t.registry, { slug: 'film', table: cauchyTable() }, 'ada');
  return t;
}

/**
 * A Cauchy-like table n = a + b/λ² (λ in µm), k = 0 on 400…800 nm every 50 nm: simple invented numbers,
 * not a measurement.
 */
export function cauchyTable(a = 1.45, b = 0.0036, kAt = 0): NkTable {
  const wavelengthNm = [400, 450, 500, 550, 600, 650, 700, 750, 800];
  return {
    wavelengthNm,
    n: wavelengthNm.map((w) => a + b / (w / 1000) ** 2),
    k: wavelengthNm.map(() => kAt),
  };
}

/**
 * A new database file `dir/name` at the schema of an older nkledger: only the migrations up to index
 * `lastIdx` applied (from a copy of the migrations folder with a shortened journal). Returns the open
 * raw connection, for the test to fill as that older version would have; the caller closes it.
 */
export function databaseAtMigration(dir: string, name: string, lastIdx: number): Database.Database {
  const folder = join(dir, `drizzle-upto-${lastIdx}`);
  cpSync(MIGRATIONS_FOLDER, folder, { recursive: true });
  const journalPath = join(folder, 'meta', '_journal.json');
  const journal = JSON.parse(readFileSync(journalPath, 'utf8'));
  journal.entries = journal.entries.filter((e: { idx: number }) => e.idx <= lastIdx);
  writeFileSync(journalPath, JSON.stringify(journal));
  const sqlite = new Database(join(dir, name));
  migrate(drizzle(sqlite), { migrationsFolder: folder });
  return sqlite;
}
