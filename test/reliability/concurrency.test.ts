/**
 * Concurrency: for DURATION_MS, CLI processes (`nkledger import`, `approve`, `show`) and HTTP clients of a
 * separate `nkledger serve` process (uploads, approvals, version and n,k reads) work on one registry at
 * once. Afterwards: every write that was acknowledged (exit 0, HTTP 201/200) is in the database with its
 * hash, no version number is duplicated or missing, no "database is locked" reached any user (CLI stderr,
 * problem documents, server stderr), no 5xx, and every version any reader saw hashes to its SHA-256
 * (a reader never sees a half-written version). SQLite WAL: one writer, readers see committed snapshots
 * (sqlite.org/wal.html).
 * The same run on PostgreSQL (a fresh database on the run's throw-away server, test/postgres-global-setup.ts),
 * shorter: there every writer serialises on the registry's write lock (src/registry/postgres.ts), and the check
 * afterwards is the same but for SQLite's own integrity check. Skipped with a plain message where PostgreSQL is missing.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, inject, it } from 'vitest';
import { openRegistry } from '../../src/registry/open.ts';
import { createMaterial } from '../../src/service/materials.ts';
import { createToken } from '../../src/service/tokens.ts';
import { createDatabase } from '../helpers/postgres.ts';
import { checkPostgresRegistry, checkRegistryFile, type RegistryCheck } from './invariants.ts';
import { cli, LOCKED, type ServeProcess, serve, servedVersionVerifies, tableCsv, writeTableFile } from './processes.ts';

const SQLITE_DURATION_MS = 10_000;
const POSTGRES_DURATION_MS = 4_000;
const CLI_LOOPS = 3;
const HTTP_WRITERS = 3;
const HTTP_READERS = 3;
const MATERIALS = ['conc-1', 'conc-2', 'conc-3'];

const dir = mkdtempSync(join(tmpdir(), 'nkledger-conc-'));
/** Servers still running when a test failed half-way: stopped here. */
const running = new Set<ServeProcess>();
afterAll(async () => {
  for (const server of running) await server.stop();
  rmSync(dir, { recursive: true, force: true });
});

const postgres = inject('postgres');
if (!postgres.adminUrl) console.warn(postgres.missing);

interface Backend {
  label: string;
  skip: boolean;
  durationMs: number;
  /** The `--db` of every process: a file, or a fresh PostgreSQL database's URL. */
  database(): Promise<string>;
  check(db: string): Promise<RegistryCheck>;
}

const BACKENDS: Backend[] = [
  { label: 'SQLite', skip: false, durationMs: SQLITE_DURATION_MS, database: async () => join(dir, 'conc.db'), check: checkRegistryFile },
  {
    label: postgres.adminUrl ? 'PostgreSQL' : `PostgreSQL: ${postgres.missing}`,
    skip: !postgres.adminUrl,
    durationMs: POSTGRES_DURATION_MS,
    database: () => createDatabase(postgres.adminUrl as string, 'nkledger_conc'),
    check: checkPostgresRegistry,
  },
];

for (const { label, skip, durationMs: DURATION_MS, database, check } of BACKENDS) {
  describe.skipIf(skip)(`processes and HTTP clients on one registry at once (${label})`, { timeout: 120_000 }, () => {
    it(`for ${DURATION_MS / 1000} s: no lost write, no duplicate number, no "database is locked", no half-written read`, async () => {
      const db = await database();
      const setup = await openRegistry(db);
      for (const slug of MATERIALS) await createMaterial(setup, { slug, name: `Concurrency ${slug}` }, 'setup');
      const editor = (await createToken(setup, { user: 'http-editor', role: 'editor', createdBy: 'setup' })).token;
      const approver = (await createToken(setup, { user: 'http-approver', role: 'approver', createdBy: 'setup' })).token;
      await setup.close();
      const server = await serve(db);
      running.add(server);

      /** Acknowledged writes: ref → sha256; and refs acknowledged as approved. */
      const imported = new Map<string, string>();
      const approvedRefs = new Set<string>();
      /** Drafts waiting for approval; each is taken by exactly one approver (creators and approvers are different users). */
      const drafts: string[] = [];
      const failures: string[] = [];
      const tally = { cliRuns: 0, httpRequests: 0, reads: 0, verifiedReads: 0 };
      let unique = 0;
      const nextA = () => 1.4 + ++unique * 1e-5;
      const deadline = Date.now() + DURATION_MS;

      const http = async (path: string, init: RequestInit & { token?: string } = {}): Promise<Response> => {
        const headers = new Headers(init.headers);
        if (init.token) headers.set('authorization', `Bearer ${init.token}`);
        const res = await fetch(`${server.url}${path}`, { ...init, headers });
        tally.httpRequests++;
        if (res.status >= 500) failures.push(`${init.method ?? 'GET'} ${path}: ${res.status} ${await res.clone().text()}`);
        if (res.headers.get('content-type') === 'application/problem+json') {
          const text = await res.clone().text();
          if (LOCKED.test(text)) failures.push(`problem document says locked: ${text}`);
        }
        return res;
      };

      async function cliLoop(id: number): Promise<void> {
        for (let i = 0; Date.now() < deadline; i++) {
          const step = i % 3;
          let r;
          if (step === 0) {
            const slug = MATERIALS[(id + i) % MATERIALS.length];
            const file = writeTableFile(dir, `cli-${id}-${i}.csv`, nextA());
            r = await cli(['import', file, '--material', slug, '--no-kk', '--json', '--db', db], 'cli-writer');
            if (r.code === 0) {
              const v = JSON.parse(r.out) as { ref: string; sha256: string };
              imported.set(v.ref, v.sha256);
              drafts.push(v.ref);
            }
          } else if (step === 1 && drafts.length > 0) {
            const ref = drafts.shift()!;
            r = await cli(['approve', ref, '--json', '--db', db], 'cli-approver');
            if (r.code === 0) approvedRefs.add(ref);
          } else {
            const refs = [...imported.keys()];
            if (refs.length === 0) continue;
            const ref = refs[(i * 7 + id) % refs.length];
            r = await cli(['show', ref, '--json', '--db', db], 'cli-reader');
            if (r.code === 0) {
              tally.reads++;
              if (servedVersionVerifies(JSON.parse(r.out))) tally.verifiedReads++;
              else failures.push(`cli show ${ref}: hash does not verify`);
            }
          }
          tally.cliRuns++;
          if (r.code !== 0) failures.push(`cli exit ${r.code}: ${r.err}`);
          if (LOCKED.test(r.err)) failures.push(`cli stderr says locked: ${r.err}`);
        }
      }

      async function httpWriter(id: number): Promise<void> {
        for (let i = 0; Date.now() < deadline; i++) {
          if (i % 2 === 1 && drafts.length > 0) {
            const ref = drafts.shift()!;
            const [slug, n] = ref.split('@');
            const res = await http(`/api/v1/materials/${slug}/versions/${n}/approve`, { method: 'POST', token: approver });
            if (res.status === 200) approvedRefs.add(ref);
            else failures.push(`approve ${ref}: ${res.status} ${await res.text()}`);
            continue;
          }
          const slug = MATERIALS[(id + i) % MATERIALS.length];
          const res = await http(`/api/v1/materials/${slug}/versions?kk=false`, {
            method: 'POST',
            headers: { 'content-type': 'text/csv' },
            body: tableCsv(nextA()),
            token: editor,
          });
          if (res.status === 201) {
            const v = (await res.json()) as { ref: string; sha256: string };
            imported.set(v.ref, v.sha256);
            drafts.push(v.ref);
          } else failures.push(`upload to ${slug}: ${res.status} ${await res.text()}`);
        }
      }

      async function httpReader(id: number): Promise<void> {
        for (let i = 0; Date.now() < deadline; i++) {
          const refs = [...imported.keys()];
          if (refs.length === 0) {
            await new Promise((r) => setTimeout(r, 20));
            continue;
          }
          const ref = refs[(i * 13 + id) % refs.length];
          const [slug, n] = ref.split('@');
          const res = await http(`/api/v1/materials/${slug}/versions/${n}`);
          if (res.status !== 200) {
            failures.push(`read ${ref}: ${res.status}`);
            continue;
          }
          tally.reads++;
          if (servedVersionVerifies(await res.json())) tally.verifiedReads++;
          else failures.push(`read ${ref}: hash does not verify`);
          if (i % 4 === 0) {
            const nk = await http(`/api/v1/materials/${slug}/versions/${n}/nk?wavelengths_nm=500,600`);
            if (nk.status !== 200) failures.push(`nk ${ref}: ${nk.status} ${await nk.text()}`);
            else tally.reads++;
          }
          if (i % 10 === 0) await http('/api/v1/materials');
        }
      }

      await Promise.all([
        ...Array.from({ length: CLI_LOOPS }, (_, i) => cliLoop(i)),
        ...Array.from({ length: HTTP_WRITERS }, (_, i) => httpWriter(i)),
        ...Array.from({ length: HTTP_READERS }, (_, i) => httpReader(i)),
      ]);
      running.delete(server);
      expect(await server.stop()).toBe(0);
      expect(server.stderr()).not.toMatch(LOCKED);
      expect(server.stderr()).not.toMatch(/internal error/);
      expect(failures).toEqual([]);

      const { problems, versions } = await check(db);
      expect(problems).toEqual([]);
      for (const [ref, sha] of imported) expect(versions.get(ref)?.sha256, ref).toBe(sha);
      for (const ref of approvedRefs) expect(versions.get(ref)?.status, ref).toBe('approved');
      console.log(
        `concurrency (${label}): ${DURATION_MS / 1000} s, ${tally.cliRuns} CLI processes, ${tally.httpRequests} HTTP requests, ` +
          `${imported.size} imports and ${approvedRefs.size} approvals acknowledged and present, ${tally.verifiedReads} version reads verified, 0 lost, 0 locked`,
      );
      expect(tally.cliRuns).toBeGreaterThanOrEqual(CLI_LOOPS * 2);
      expect(approvedRefs.size).toBeGreaterThan(0);
    });
  });
}
