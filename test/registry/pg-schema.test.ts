/**
 * The two drizzle schemas of the registry — SQLite (src/registry/schema.ts + schema-auth.ts) and PostgreSQL
 * (src/registry/schema-pg.ts) — describe the same tables: table names, columns (SQL name, JS key, kind of
 * value, nullability, default, generated id, enum values), primary keys, unique constraints (a column's
 * `.unique()`, a unique index and a UNIQUE constraint count alike, by their name and columns), foreign keys
 * (columns, target, ON DELETE/UPDATE), indexes and check constraints (by name). Pure: no server.
 *
 * A column added to one schema only changes that table's description, so `schemaDifferences` reports it and the
 * first test fails; the second test shows this on a modified copy of one table.
 */
import { getTableColumns, is } from 'drizzle-orm';
import { getTableConfig as pgConfig, PgTable, pgTable, text as pgText } from 'drizzle-orm/pg-core';
import { SQLiteTable, getTableConfig as sqliteConfig } from 'drizzle-orm/sqlite-core';
import { describe, expect, it } from 'vitest';
import * as sqliteRecords from '../../src/registry/schema.ts';
import * as sqliteAuth from '../../src/registry/schema-auth.ts';
import * as pgSchema from '../../src/registry/schema-pg.ts';

interface ColumnShape {
  name: string;
  kind: string;
  notNull: boolean;
  default: unknown;
  generatedId: boolean;
  enumValues: string[] | null;
}

interface TableShape {
  columns: Record<string, ColumnShape>;
  primaryKey: string[];
  uniques: string[];
  foreignKeys: string[];
  indexes: string[];
  checks: string[];
}

/** The value a column holds in JS, whatever the dialect calls its type. */
const KINDS: Record<string, string> = { integer: 'integer', text: 'text', boolean: 'boolean', blob: 'bytes', bytea: 'bytes' };

function kindOf(column: { getSQLType(): string; columnType: string }): string {
  if (column.columnType === 'SQLiteBoolean') return 'boolean'; // integer 0/1 read as a boolean
  const sqlType = column.getSQLType();
  return KINDS[sqlType] ?? `unknown:${sqlType}`;
}

type AnyConfig = ReturnType<typeof sqliteConfig> | ReturnType<typeof pgConfig>;

function describeTable(table: SQLiteTable | PgTable): [string, TableShape] {
  const config: AnyConfig = is(table, SQLiteTable) ? sqliteConfig(table) : pgConfig(table as PgTable);
  const columns: Record<string, ColumnShape> = {};
  const byKey = getTableColumns(table) as Record<string, AnyConfig['columns'][number]>;
  for (const [key, column] of Object.entries(byKey)) {
    const c = column as unknown as {
      name: string;
      notNull: boolean;
      default: unknown;
      primary: boolean;
      autoIncrement?: boolean;
      generatedIdentity?: { type: string };
      enumValues?: string[];
      getSQLType(): string;
      columnType: string;
    };
    columns[key] = {
      name: c.name,
      kind: kindOf(c),
      notNull: c.notNull,
      default: c.default,
      generatedId: Boolean(c.autoIncrement) || c.generatedIdentity !== undefined,
      enumValues: c.enumValues?.length ? [...c.enumValues] : null,
    };
  }
  const names = (cols: { name: string }[]) => cols.map((c) => c.name).join(',');
  const primaryKey = [
    ...config.columns.filter((c) => c.primary).map((c) => c.name),
    ...config.primaryKeys.flatMap((pk) => pk.columns.map((c) => c.name)),
  ].sort();
  const uniques = [
    ...config.columns.filter((c) => c.isUnique).map((c) => `${c.uniqueName}(${c.name})`),
    ...config.uniqueConstraints.map((u) => `${u.getName()}(${names(u.columns)})`),
    ...config.indexes.filter((i) => i.config.unique).map((i) => `${i.config.name}(${names(i.config.columns as { name: string }[])})`),
  ].sort();
  const foreignKeys = config.foreignKeys
    .map((fk) => {
      const ref = fk.reference();
      const target = is(ref.foreignTable, SQLiteTable) ? sqliteConfig(ref.foreignTable).name : pgConfig(ref.foreignTable as PgTable).name;
      return `(${names(ref.columns)}) -> ${target}(${names(ref.foreignColumns)}) on delete ${fk.onDelete ?? 'no action'} on update ${fk.onUpdate ?? 'no action'}`;
    })
    .sort();
  const indexes = config.indexes
    .map((i) => `${i.config.unique ? 'unique ' : ''}${i.config.name}(${names(i.config.columns as { name: string }[])})`)
    .sort();
  const checks = config.checks.map((c) => c.name).sort();
  return [config.name, { columns, primaryKey, uniques, foreignKeys, indexes, checks }];
}

function tablesOf(module: Record<string, unknown>): Map<string, { exportName: string; shape: TableShape }> {
  const out = new Map<string, { exportName: string; shape: TableShape }>();
  for (const [exportName, value] of Object.entries(module)) {
    if (!is(value, SQLiteTable) && !is(value, PgTable)) continue;
    const [name, shape] = describeTable(value as SQLiteTable | PgTable);
    out.set(name, { exportName, shape });
  }
  return out;
}

/** Every way two sets of tables differ, one line each; empty when they describe the same tables. */
function schemaDifferences(sqlite: Record<string, unknown>, postgres: Record<string, unknown>): string[] {
  const a = tablesOf(sqlite);
  const b = tablesOf(postgres);
  const out: string[] = [];
  for (const name of new Set([...a.keys(), ...b.keys()])) {
    const x = a.get(name);
    const y = b.get(name);
    if (!x || !y) {
      out.push(`table ${name}: only in ${x ? 'SQLite' : 'PostgreSQL'}`);
      continue;
    }
    if (x.exportName !== y.exportName) out.push(`table ${name}: exported as ${x.exportName} and ${y.exportName}`);
    for (const key of new Set([...Object.keys(x.shape.columns), ...Object.keys(y.shape.columns)])) {
      const cx = x.shape.columns[key];
      const cy = y.shape.columns[key];
      if (!cx || !cy) out.push(`${name}.${key}: only in ${cx ? 'SQLite' : 'PostgreSQL'}`);
      else if (JSON.stringify(cx) !== JSON.stringify(cy)) out.push(`${name}.${key}: ${JSON.stringify(cx)} vs ${JSON.stringify(cy)}`);
    }
    for (const part of ['primaryKey', 'uniques', 'foreignKeys', 'indexes', 'checks'] as const) {
      const px = JSON.stringify(x.shape[part]);
      const py = JSON.stringify(y.shape[part]);
      if (px !== py) out.push(`${name} ${part}: ${px} vs ${py}`);
    }
  }
  return out;
}

const sqliteSchema = { ...sqliteRecords, ...sqliteAuth };

describe('the SQLite and PostgreSQL schemas describe the same tables', () => {
  it('tables, columns, keys, indexes and checks agree', () => {
    const tables = tablesOf(sqliteSchema);
    // All seven tables are compared (a typo in the module list would compare nothing).
    expect([...tables.keys()].sort()).toEqual([
      'api_tokens',
      'audit_log',
      'material_versions',
      'materials',
      'registry_settings',
      'web_pending_uploads',
      'web_sessions',
    ]);
    expect(tables.get('material_versions')?.shape.foreignKeys).toEqual(['(material_id) -> materials(id) on delete no action on update no action']);
    expect(schemaDifferences(sqliteSchema, pgSchema)).toEqual([]);
  });

  it('a column added to one schema only is reported', () => {
    // A PostgreSQL copy of registry_settings with one column more than the SQLite table.
    const widened = pgTable('registry_settings', {
      key: pgText('key').primaryKey(),
      value: pgText('value').notNull(),
      updatedBy: pgText('updated_by').notNull(),
      updatedAt: pgText('updated_at').notNull(),
      note: pgText('note'),
    });
    expect(schemaDifferences({ registrySettings: sqliteRecords.registrySettings }, { registrySettings: widened })).toEqual([
      'registry_settings.note: only in PostgreSQL',
    ]);
    // …and one whose nullability differs.
    const loosened = pgTable('registry_settings', {
      key: pgText('key').primaryKey(),
      value: pgText('value'),
      updatedBy: pgText('updated_by').notNull(),
      updatedAt: pgText('updated_at').notNull(),
    });
    expect(schemaDifferences({ registrySettings: sqliteRecords.registrySettings }, { registrySettings: loosened })).toHaveLength(1);
  });
});
