/**
 * The database's own defences and health, as `verify` checks them: the triggers the migrations created
 * (compared by their full SQL, so a same-named trigger that does nothing is caught), and SQLite's
 * `PRAGMA integrity_check`.
 */
import { sql as sqlText } from 'drizzle-orm';
import { readMigrationFiles } from 'drizzle-orm/migrator';
import { queryRows } from './sql.ts';
import type { Registry } from './open.ts';
import { MIGRATIONS_FOLDER } from './open.ts';

/** A statement of a migration file, without the comment lines before it. */
function statementText(sql: string): string {
  return sql
    .split('\n')
    .filter((line, i, all) => !(line.trimStart().startsWith('--') && all.slice(0, i).every((l) => l.trimStart().startsWith('--') || l.trim() === '')))
    .join('\n')
    .trim()
    .replace(/;\s*$/, '');
}

let expected: Map<string, string> | undefined;

/** Every trigger the committed migrations leave in place, name → its CREATE TRIGGER text. */
export function expectedTriggers(): Map<string, string> {
  if (expected) return expected;
  // A trigger dropped and re-created by a later migration keeps its first place, so reports list triggers
  // in the order the migrations introduced them.
  const triggers = new Map<string, string>();
  const dropped = new Set<string>();
  for (const migration of readMigrationFiles({ migrationsFolder: MIGRATIONS_FOLDER })) {
    for (const raw of migration.sql) {
      const text = statementText(raw);
      const created = /^CREATE\s+TRIGGER\s+(?:IF\s+NOT\s+EXISTS\s+)?[`"]?([\w]+)[`"]?/i.exec(text);
      if (created) {
        triggers.set(created[1], text);
        dropped.delete(created[1]);
      }
      const gone = /^DROP\s+TRIGGER\s+(?:IF\s+EXISTS\s+)?[`"]?([\w]+)[`"]?/i.exec(text);
      if (gone) dropped.add(gone[1]);
    }
  }
  for (const name of dropped) triggers.delete(name);
  return (expected = triggers);
}

/** Whitespace runs count as one space: SQLite stores the text as written, and line endings may differ on checkout. */
const sameSql = (a: string, b: string) => a.replace(/\s+/g, ' ').trim() === b.replace(/\s+/g, ' ').trim();

export interface TriggerCheck {
  missing: string[];
  /** Present but not firing (PostgreSQL: ALTER TABLE … DISABLE TRIGGER); always empty on SQLite, which cannot disable one. */
  disabled: string[];
  /** Present under the expected name, with other SQL (e.g. a `WHEN 0` that never fires). */
  altered: string[];
  /** Triggers no migration created. */
  unexpected: string[];
}

/**
 * The registry's triggers against those its migrations create. On PostgreSQL, from the catalogue (integrity-pg.ts:
 * triggers by pg_get_triggerdef, their functions by body, disabled ones), on the registry's current connection
 * (inside `readTransaction`, the snapshot's).
 */
export async function checkTriggers(registry: Registry): Promise<TriggerCheck> {
  if (registry.pg) {
    const { checkPgDefences } = await import('./integrity-pg.ts');
    const client = (registry.pg.db as unknown as { $client: import('./integrity-pg.ts').PgQueryable }).$client;
    return checkPgDefences(client);
  }
  const triggers = await queryRows<{ name: string; sql: string | null }>(
    registry,
    sqlText`SELECT name, sql FROM sqlite_master WHERE type = 'trigger'`,
  );
  const actual = new Map(triggers.map((t) => [t.name, t.sql ?? '']));
  const want = expectedTriggers();
  const missing: string[] = [];
  const altered: string[] = [];
  for (const [name, sql] of want) {
    const have = actual.get(name);
    if (have === undefined) missing.push(name);
    else if (!sameSql(have, sql)) altered.push(name);
  }
  const unexpected = [...actual.keys()].filter((name) => !want.has(name)).sort();
  return { missing, altered, unexpected, disabled: [] };
}

/** SQLite's own structural check: an empty list when it says "ok", else its findings (at most 100). */
export async function integrityCheck(registry: Registry): Promise<string[]> {
  if (registry.pg) return []; // no equivalent check of a whole database from SQL: see verifyRegistry's not_applicable
  const rows = registry.sqlite.pragma('integrity_check(100)') as { integrity_check: string }[];
  const lines = rows.map((r) => r.integrity_check);
  return lines.length === 1 && lines[0] === 'ok' ? [] : lines;
}
