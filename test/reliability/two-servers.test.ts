/**
 * Two `nkledger serve` processes on one PostgreSQL database (the issue: several stateless servers), with CLI
 * writers (`nkledger import --db postgres://…`) beside them:
 * - uploads through both servers and CLI imports at once, for a bounded time and count: every acknowledged write
 *   is stored with its hash, each material's numbers are 1..N with no gap or duplicate, the audit trail matches
 *   the versions (test/reliability/invariants.ts), `nkledger verify` exits 0 and both servers list every version;
 * - a token revoked through one server (admin API, or `nkledger token revoke` in a third process) is refused with
 *   401 by the other on its very next request;
 * - a version approved, then retired, through one server shows so in the other's cached reads of it (the version
 *   and its n,k answer, which that server remembers by status: src/api/routes/nk.ts), and a setting changed through
 *   one server (or the CLI) is in force in the other — the change notices of src/registry/postgres-changes.ts
 *   clearing the other server's memo — as soon as the notice arrives (NOTICE_WAIT_MS below says why not
 *   necessarily on the very next request); how many showed on the very next request is printed.
 * Servers bind 127.0.0.1 on free ports; every process is stopped in afterAll, also after a failure. Skipped with a
 * plain message where PostgreSQL 15+ is missing (test/postgres-global-setup.ts).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest';
import { openRegistry } from '../../src/registry/open.ts';
import { createMaterial } from '../../src/service/materials.ts';
import { createToken } from '../../src/service/tokens.ts';
import { createDatabase } from '../helpers/postgres.ts';
import { checkPostgresRegistry } from './invariants.ts';
import { cli, LOCKED, serve, tableCsv, writeTableFile, type ServeProcess } from './processes.ts';

const postgres = inject('postgres');
if (!postgres.adminUrl) console.warn(postgres.missing);

/** The mixed load: at most this long, and at most this many writes per writer. */
const LOAD_MS = 5_000;
const WRITES_PER_WRITER = 25;
const HTTP_WRITERS_PER_SERVER = 2;
const CLI_WRITERS = 2;
const MATERIALS = ['duo-1', 'duo-2'];
/** How many times each change is made and looked for on the other server. */
const REPEATS = 8;
/**
 * How long a status or setting change may take to show on the other server. It shows when PostgreSQL's notice of
 * the commit reaches that server's listening connection (src/registry/postgres-changes.ts), normally well under a
 * millisecond on loopback — but asynchronously, so a request the test sends right after the writer's answer can
 * still overtake the notice on a loaded machine (on 2 cores a few changes in a hundred — approvals, retirements,
 * settings — showed only on a later request, within some tens of ms; the test prints how many). A revoked token does not wait for a notice
 * (looked up on every request) and is checked on the very next request.
 */
const NOTICE_WAIT_MS = 2_000;

interface Tokens {
  editor: string;
  approver: string;
  admin: string;
}

describe.skipIf(!postgres.adminUrl)(
  `two serve processes on one PostgreSQL, with CLI writers${postgres.adminUrl ? '' : ` (${postgres.missing})`}`,
  { timeout: 120_000 },
  () => {
    const dir = mkdtempSync(join(tmpdir(), 'nkledger-duo-'));
    let db = '';
    let tokens: Tokens;
    const servers: ServeProcess[] = [];
    let a: ServeProcess;
    let b: ServeProcess;
    let unique = 0;
    const nextA = () => 1.5 + ++unique * 1e-5;

    const http = (server: ServeProcess, path: string, init: RequestInit & { token?: string } = {}): Promise<Response> => {
      const headers = new Headers(init.headers);
      if (init.token) headers.set('authorization', `Bearer ${init.token}`);
      return fetch(`${server.url}${path}`, { ...init, headers });
    };
    const jsonBody = (method: string, body: unknown) => ({ method, headers: { 'content-type': 'application/json' }, body: JSON.stringify(body) });
    const upload = (server: ServeProcess, slug: string) =>
      http(server, `/api/v1/materials/${slug}/versions?kk=false`, {
        method: 'POST',
        headers: { 'content-type': 'text/csv' },
        body: tableCsv(nextA()),
        token: tokens.editor,
      });

    beforeAll(async () => {
      db = await createDatabase(postgres.adminUrl as string, 'nkledger_duo');
      const setup = await openRegistry(db);
      try {
        for (const slug of [...MATERIALS, 'duo-status']) await createMaterial(setup, { slug, name: `Two servers ${slug}` }, 'setup');
        tokens = {
          editor: (await createToken(setup, { user: 'duo-editor', role: 'editor', createdBy: 'setup' })).token,
          approver: (await createToken(setup, { user: 'duo-approver', role: 'approver', createdBy: 'setup' })).token,
          admin: (await createToken(setup, { user: 'duo-admin', role: 'admin', createdBy: 'setup' })).token,
        };
      } finally {
        await setup.close();
      }
      // Started one after the other: each is in `servers` (and stopped in afterAll) as soon as it runs.
      for (let i = 0; i < 2; i++) servers.push(await serve(db));
      [a, b] = servers;
      expect(a.url).not.toBe(b.url);
    });

    afterAll(async () => {
      await Promise.all(
        servers.map(async (s) => {
          const stopped = s.stop();
          const killer = setTimeout(() => s.child.kill('SIGKILL'), 15_000);
          await stopped;
          clearTimeout(killer);
        }),
      );
      rmSync(dir, { recursive: true, force: true });
    });

    it(`uploads through both servers and CLI imports at once (≤ ${LOAD_MS / 1000} s): nothing lost, numbers gap-free, verify exits 0`, async () => {
      const acknowledged = new Map<string, string>(); // ref → sha256
      const failures: string[] = [];
      const deadline = Date.now() + LOAD_MS;

      async function httpWriter(server: ServeProcess, id: number): Promise<void> {
        for (let i = 0; i < WRITES_PER_WRITER && Date.now() < deadline; i++) {
          const slug = MATERIALS[(id + i) % MATERIALS.length];
          const res = await upload(server, slug);
          const text = await res.text();
          if (res.status === 201) {
            const v = JSON.parse(text) as { ref: string; sha256: string };
            if (acknowledged.has(v.ref)) failures.push(`${v.ref} acknowledged twice`);
            acknowledged.set(v.ref, v.sha256);
          } else failures.push(`upload to ${slug} through ${server.url}: ${res.status} ${text}`);
          if (LOCKED.test(text)) failures.push(`lock error reached a client: ${text}`);
        }
      }

      async function cliWriter(id: number): Promise<void> {
        for (let i = 0; i < WRITES_PER_WRITER && Date.now() < deadline; i++) {
          const slug = MATERIALS[(id + i) % MATERIALS.length];
          const file = writeTableFile(dir, `cli-${id}-${i}.csv`, nextA());
          const r = await cli(['import', file, '--material', slug, '--no-kk', '--json', '--db', db], `cli-writer-${id}`);
          if (r.code === 0) {
            const v = JSON.parse(r.out) as { ref: string; sha256: string };
            if (acknowledged.has(v.ref)) failures.push(`${v.ref} acknowledged twice`);
            acknowledged.set(v.ref, v.sha256);
          } else failures.push(`cli import exit ${r.code}: ${r.err}`);
          if (LOCKED.test(r.err)) failures.push(`lock error reached a CLI user: ${r.err}`);
        }
      }

      await Promise.all([
        ...servers.flatMap((s, si) => Array.from({ length: HTTP_WRITERS_PER_SERVER }, (_, i) => httpWriter(s, si * HTTP_WRITERS_PER_SERVER + i))),
        ...Array.from({ length: CLI_WRITERS }, (_, i) => cliWriter(i)),
      ]);
      expect(failures).toEqual([]);
      expect(acknowledged.size).toBeGreaterThanOrEqual(servers.length * HTTP_WRITERS_PER_SERVER + CLI_WRITERS);

      const { problems, versions } = await checkPostgresRegistry(db);
      expect(problems).toEqual([]);
      for (const [ref, sha] of acknowledged) expect(versions.get(ref)?.sha256, ref).toBe(sha);
      for (const slug of MATERIALS) {
        const numbers = [...versions.keys()].filter((ref) => ref.startsWith(`${slug}@`)).map((ref) => Number(ref.split('@')[1]));
        const acked = [...acknowledged.keys()].filter((ref) => ref.startsWith(`${slug}@`)).length;
        // Nothing but these writers wrote the material: every number 1..N was acknowledged to exactly one of them.
        expect(numbers.sort((x, y) => x - y)).toEqual(Array.from({ length: acked }, (_, i) => i + 1));
        // Both servers list every version.
        for (const server of servers) {
          const res = await http(server, `/api/v1/materials/${slug}/history`);
          expect(res.status).toBe(200);
          const served = (await res.json()) as { versions: { version: number }[] };
          expect(served.versions.map((v) => v.version).sort((x, y) => x - y)).toEqual(numbers);
        }
      }
      const verify = await cli(['verify', '--json', '--db', db], 'verifier');
      expect(verify.code, verify.err).toBe(0);
      expect(JSON.parse(verify.out)).toMatchObject({ ok: true, checked_versions: versions.size });
      for (const s of servers) {
        expect(s.stderr()).not.toMatch(LOCKED);
        expect(s.stderr()).not.toMatch(/internal error/i);
      }
      console.log(
        `two servers: ${acknowledged.size} writes acknowledged (HTTP through 2 servers and CLI), all present, numbers 1..N per material, verify ok`,
      );
    });

    it('a token revoked through one server is refused by the other on its very next request (admin API and CLI)', async () => {
      for (let i = 0; i < REPEATS; i++) {
        const [through, other] = i % 2 === 0 ? [a, b] : [b, a];
        const created = await http(through, '/api/v1/tokens', {
          ...jsonBody('POST', { user: `short-lived-${i}`, role: 'editor' }),
          token: tokens.admin,
        });
        expect(created.status).toBe(201);
        const { token, id } = (await created.json()) as { token: string; id: string };
        // The other server has seen the token work (and may remember whose it is).
        for (let k = 0; k < 3; k++) {
          const who = await http(other, '/api/v1/whoami', { token });
          expect(who.status).toBe(200);
          expect((await who.json()).user).toBe(`short-lived-${i}`);
        }
        const revoked = await http(through, `/api/v1/tokens/${id}/revoke`, { method: 'POST', token: tokens.admin });
        expect(revoked.status).toBe(200);
        const next = await http(other, '/api/v1/whoami', { token });
        expect(next.status, `revocation ${i}: the other server's next request`).toBe(401);
        expect((await next.json()).rule).toBe('auth-invalid-token');
        // A write with it is refused too, and writes nothing.
        const write = await http(other, '/api/v1/materials', { ...jsonBody('POST', { slug: `never-${i}`, name: 'Never' }), token });
        expect(write.status).toBe(401);
      }
      // Revoked by a CLI process on the database: both servers refuse it on their next request.
      const created = await http(a, '/api/v1/tokens', { ...jsonBody('POST', { user: 'cli-revoked', role: 'reader' }), token: tokens.admin });
      const { token, id } = (await created.json()) as { token: string; id: string };
      for (const s of servers) expect((await http(s, '/api/v1/whoami', { token })).status).toBe(200);
      const r = await cli(['token', 'revoke', id, '--db', db], 'duo-admin');
      expect(r.code, r.err).toBe(0);
      for (const s of servers) expect((await http(s, '/api/v1/whoami', { token })).status).toBe(401);
      // The refused writes left no material behind (counted on a connection of the test's own).
      const client = new pg.Client({ connectionString: db });
      await client.connect();
      try {
        const { rows } = await client.query<{ n: string }>("SELECT count(*) AS n FROM materials WHERE slug LIKE 'never-%'");
        expect(rows[0].n).toBe('0');
      } finally {
        await client.end();
      }
    });

    /**
     * Read with `read` until it gives `want`, at most NOTICE_WAIT_MS; then once more (it must not go back). How
     * many reads it took and how long, into `lags`; fails when the change never shows.
     */
    async function seen(read: () => Promise<unknown>, want: unknown, what: string): Promise<void> {
      const started = performance.now();
      let reads = 0;
      let got: unknown;
      do {
        got = await read();
        reads++;
      } while (got !== want && performance.now() - started < NOTICE_WAIT_MS);
      const ms = performance.now() - started;
      expect(got, `${what}: not seen within ${NOTICE_WAIT_MS} ms`).toBe(want);
      expect(await read(), `${what}: seen, then gone again`).toBe(want);
      lags.push({ reads, ms });
    }
    const lags: { reads: number; ms: number }[] = [];
    const lagSummary = () => {
      const firstRead = lags.filter((l) => l.reads === 1).length;
      const slowest = Math.max(...lags.map((l) => l.ms)).toFixed(1);
      const line = `${firstRead} of ${lags.length} changes seen on the other server's very next request; slowest ${slowest} ms, ${Math.max(...lags.map((l) => l.reads))} reads`;
      lags.length = 0;
      return line;
    };

    it('a version approved, then retired, through one server shows so in the other one’s cached reads (version and n,k)', async () => {
      for (let i = 0; i < REPEATS; i++) {
        const [through, other] = i % 2 === 0 ? [a, b] : [b, a];
        const up = await upload(through, 'duo-status');
        expect(up.status).toBe(201);
        const { ref } = (await up.json()) as { ref: string };
        const n = ref.split('@')[1];
        const base = `/api/v1/materials/duo-status/versions/${n}`;
        const nkStatus = async () => {
          const res = await http(other, `${base}/nk?wavelengths_nm=450,550`);
          expect(res.status).toBe(200);
          return (await res.json()).status;
        };
        // The other server reads the draft (and remembers its status) several times.
        for (let k = 0; k < 3; k++) expect(await nkStatus()).toBe('draft');
        const approved = await http(through, `${base}/approve`, { method: 'POST', token: tokens.approver });
        expect(approved.status, await approved.clone().text()).toBe(200);
        await seen(nkStatus, 'approved', `approval ${i}: the other server's n,k answer`);
        const version = await http(other, base);
        expect((await version.json()).status).toBe('approved');
        // Retired through the first server: the other's n,k answer of the approved version, rendered once and
        // kept (src/api/routes/nk.ts), must not outlive the status.
        for (let k = 0; k < 3; k++) expect(await nkStatus()).toBe('approved');
        const retired = await http(through, `${base}/retire`, {
          ...jsonBody('POST', { reason: 'superseded in the two-server test' }),
          token: tokens.approver,
        });
        expect(retired.status, await retired.clone().text()).toBe(200);
        await seen(nkStatus, 'retired', `retirement ${i}: the other server's n,k answer`);
      }
      console.log(`two servers, approvals and retirements: ${lagSummary()}`);
    });

    it('a setting changed through one server (or the CLI) is in force in the other', async () => {
      const anonymous = (s: ServeProcess) => http(s, '/api/v1/materials').then((res) => res.status);
      for (let i = 0; i < REPEATS; i++) {
        const [through, other] = i % 2 === 0 ? [a, b] : [b, a];
        expect(await anonymous(other)).toBe(200);
        const off = await http(through, '/api/v1/settings/anonymous_reads', { ...jsonBody('PUT', { value: 'off' }), token: tokens.admin });
        expect(off.status).toBe(200);
        await seen(() => anonymous(other), 401, `setting ${i}: the other server's anonymous reads`);
        const settings = await http(other, '/api/v1/settings', { token: tokens.admin });
        expect((await settings.json()).settings.anonymous_reads).toBe('off');
        const reset = await http(through, '/api/v1/settings/anonymous_reads', { method: 'DELETE', token: tokens.admin });
        expect(reset.status).toBe(200);
        await seen(() => anonymous(other), 200, `reset ${i}: the other server's anonymous reads`);
      }
      // max_nk_points set by a CLI process: both servers refuse a request beyond it, and allow it after the reset.
      const threePoints = (s: ServeProcess) =>
        http(s, '/api/v1/materials/duo-status/versions/1/nk?wavelengths_nm=450,500,550').then(async (res) =>
          res.status === 200 ? 'ok' : ((await res.json()) as { rule: string }).rule,
        );
      for (const s of servers) expect(await threePoints(s)).toBe('ok');
      const set = await cli(['settings', 'set', 'max_nk_points', '2', '--db', db], 'duo-admin');
      expect(set.code, set.err).toBe(0);
      for (const s of servers) await seen(() => threePoints(s), 'nk-too-many-points', `max_nk_points set by the CLI, ${s.url}`);
      const reset = await cli(['settings', 'reset', 'max_nk_points', '--db', db], 'duo-admin');
      expect(reset.code, reset.err).toBe(0);
      for (const s of servers) await seen(() => threePoints(s), 'ok', `max_nk_points reset by the CLI, ${s.url}`);
      console.log(`two servers, settings: ${lagSummary()}`);
    });
  },
);
