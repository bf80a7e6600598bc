/**
 * A real server for API tests: a registry in a fresh temp directory (or, with `postgres`, a fresh database on the
 * run's throw-away PostgreSQL server, test/helpers/postgres.ts), the app listening on an ephemeral 127.0.0.1
 * port, one token per role, and fetch helpers. Nothing here mocks HTTP.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { openRegistry, type Registry } from '../../src/registry/open.ts';
import { startServer, type RunningServer, type ServerOptions } from '../../src/api/server.ts';
import { createToken } from '../../src/service/tokens.ts';
import { TOKEN_ROLES, type TokenRole } from '../../src/registry/schema-auth.ts';
import { createMaterial } from '../../src/service/materials.ts';
import { importVersion } from '../../src/service/versions.ts';
import { approve } from '../../src/service/lifecycle.ts';
import { cauchyTable } from '../registry/helpers.ts';
import pg from 'pg';
import { createDatabase } from '../helpers/postgres.ts';

/** The tables a write could touch (a refused request must leave each one's row count as it was). */
export const WRITE_TABLES = ['materials', 'material_versions', 'audit_log', 'api_tokens', 'registry_settings'] as const;

export interface HarnessOptions extends Partial<ServerOptions> {
  /** Superuser URL of a PostgreSQL server: the registry is then a fresh database there instead of an SQLite file. */
  postgres?: string;
}

export interface ApiHarness {
  /** Temp directory holding the database (removed by stop). */
  dir: string;
  registry: Registry;
  server: RunningServer;
  url: string;
  /** A token per role; user names are the role names ("reader", "editor", ...). */
  tokens: Record<TokenRole, string>;
  /** fetch against the server; `as` adds "Authorization: Bearer <token of that role>". */
  request(path: string, init?: RequestInit & { as?: TokenRole; token?: string }): Promise<Response>;
  /** Which database holds the registry. */
  backend: 'sqlite' | 'postgres';
  /** Row count of a table, to prove a refused request wrote nothing (SQLite only: synchronous). */
  count(table: string): number;
  /** Row count of a table on either backend, read on a connection of its own. */
  countRows(table: string): Promise<number>;
  stop(): Promise<void>;
}

export async function startHarness(options: HarnessOptions = {}): Promise<ApiHarness> {
  const { postgres, ...serverOptions } = options;
  const dir = mkdtempSync(join(tmpdir(), 'nkledger-api-'));
  const dbUrl = postgres ? await createDatabase(postgres, 'nkledger_api') : null;
  const registry = await openRegistry(dbUrl ?? join(dir, 'api.db'));
  // The tests' own connection for counting rows: not the registry's pool, so a count never waits behind its writes.
  const counter = dbUrl ? new pg.Pool({ connectionString: dbUrl, max: 1 }) : null;
  const tokens = {} as Record<TokenRole, string>;
  for (const role of TOKEN_ROLES) tokens[role] = (await createToken(registry, { user: role, role, createdBy: 'test-setup' })).token;
  const server = await startServer({ registry, host: '127.0.0.1', port: 0, ...serverOptions });
  const count = (table: string): number => {
    if (counter) throw new Error('count() reads SQLite only: use countRows() on PostgreSQL');
    return (registry.sqlite.prepare(`SELECT COUNT(*) AS n FROM ${table}`).get() as { n: number }).n;
  };
  return {
    backend: counter ? 'postgres' : 'sqlite',
    dir,
    registry,
    server,
    url: server.url,
    tokens,
    request(path, init = {}) {
      const { as, token, ...rest } = init;
      const headers = new Headers(rest.headers);
      const bearer = token ?? (as ? tokens[as] : undefined);
      if (bearer !== undefined) headers.set('authorization', `Bearer ${bearer}`);
      return fetch(`${server.url}${path}`, { ...rest, headers });
    },
    count,
    async countRows(table) {
      if (!counter) return count(table);
      const { rows } = await counter.query<{ n: string }>(`SELECT count(*) AS n FROM ${table}`);
      return Number(rows[0].n);
    },
    async stop() {
      await server.close();
      await registry.close();
      await counter?.end();
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** A material `slug` whose version 1 is an approved table-only Cauchy glass (cauchyTable()); returns "slug@1". */
export async function approvedGlass(h: ApiHarness, slug = 'glass'): Promise<string> {
  await createMaterial(h.registry, { slug, name: 'Glass' }, 'lab-editor');
  await importVersion(h.registry, { slug, table: cauchyTable() }, 'lab-editor');
  await approve(h.registry, `${slug}@1`, 'lab-approver');
  return `${slug}@1`;
}

/** Counts of every table a write could touch (SQLite). */
export function snapshotCounts(h: ApiHarness): Record<string, number> {
  return Object.fromEntries(WRITE_TABLES.map((t) => [t, h.count(t)]));
}

/** Counts of every table a write could touch, on either backend. */
export async function tableCounts(h: ApiHarness): Promise<Record<string, number>> {
  const counts: Record<string, number> = {};
  for (const t of WRITE_TABLES) counts[t] = await h.countRows(t);
  return counts;
}

export const json = (body: unknown): RequestInit => ({
  method: 'POST',
  headers: { 'content-type': 'application/json' },
  body: JSON.stringify(body),
});

/**
 * An invented, smooth n,k table as CSV (not a measurement): a Cauchy-like n = a + 0.01/λ²(µm) and a
 * small absorption tail k = 0.002·(400/λ)⁴, 400…800 nm every 25 nm (17 rows, enough for the KK check).
 * Different `a` give different content, hence different hashes.
 */
export function csvTable(a = 1.9): string {
  const rows = ['wavelength_nm,n,k'];
  for (let wl = 400; wl <= 800; wl += 25) {
    const um = wl / 1000;
    rows.push(`${wl},${(a + 0.01 / um ** 2).toFixed(6)},${(0.002 * (400 / wl) ** 4).toFixed(6)}`);
  }
  return `${rows.join('\n')}\n`;
}

export const csv = (body: string): RequestInit => ({ method: 'POST', headers: { 'content-type': 'text/csv' }, body });
