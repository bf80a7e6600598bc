/**
 * Server mode's failures, each one line naming the URL and what to check, with its own exit code and no stack
 * trace: nothing listening, a wrong URL, an HTML page from a proxy, no answer in time (exit 4); a busy server
 * retried, then reported (exit 4); a URL that is not http(s) (exit 2).
 */
import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../cli/run-cli.ts';
import { CLEAN_ENV, closedPort, startLab, type Lab } from './lab-server.ts';

/** A local HTTP server answering every request with `answer` (or never, for the time-out case). */
async function fakeServer(
  answer: ((res: import('node:http').ServerResponse) => void) | null,
): Promise<{ url: string; server: Server; hits: () => number }> {
  let hits = 0;
  const server = createServer((_req, res) => {
    hits++;
    if (answer) answer(res);
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  return { url: `http://127.0.0.1:${(server.address() as { port: number }).port}`, server, hits: () => hits };
}

const close = (server: Server) =>
  new Promise<void>((resolve) => {
    server.closeAllConnections();
    server.close(() => resolve());
  });

const oneLine = (text: string) => {
  expect(text.trim().split('\n')).toHaveLength(1);
  expect(text).not.toMatch(/\bat .*\.ts:\d+/); // no stack trace
};

describe('server mode: clear failures', () => {
  let lab: Lab;
  beforeAll(async () => {
    lab = await startLab();
  });
  afterAll(() => lab?.stop());

  it('nothing listening: exit 4, names the URL and says to check that the server runs', async () => {
    const url = `http://127.0.0.1:${await closedPort()}`;
    const r = await runCli(['list', '--server', url], { env: CLEAN_ENV });
    expect(r.code).toBe(4);
    oneLine(r.stderr);
    expect(r.stderr).toContain(`cannot reach the nkledger server at ${url}: connection refused`);
    expect(r.stderr).toContain('[server-unreachable]');
  });

  it('a URL that is not the server root: exit 4, says which URL to give', async () => {
    const r = await runCli(['show', 'glass@1', '--server', `${lab.url}/nkledger`], { env: CLEAN_ENV });
    expect(r.code).toBe(4);
    oneLine(r.stderr);
    expect(r.stderr).toContain(`${lab.url}/nkledger has no route GET /api/v1/refs/glass%401`);
    expect(r.stderr).toContain('[server-wrong-url]');
  });

  it('a proxy answering HTML: exit 4, says a proxy or another web server is there', async () => {
    const proxy = await fakeServer((res) => {
      res.writeHead(502, { 'content-type': 'text/html' });
      res.end('<html><body>Bad Gateway</body></html>');
    });
    try {
      const r = await runCli(['list'], { env: { ...CLEAN_ENV, NKLEDGER_SERVER: proxy.url } });
      expect(r.code).toBe(4);
      oneLine(r.stderr);
      expect(r.stderr).toContain(`${proxy.url} answered GET /api/v1/materials with an HTML page (HTTP 502), not an nkledger answer`);
      expect(r.stderr).toContain('[server-not-nkledger]');
      // The same for a 200 login page.
      const page = await fakeServer((res) => {
        res.writeHead(200, { 'content-type': 'text/html; charset=utf-8' });
        res.end('<html>Sign in</html>');
      });
      const r2 = await runCli(['list', '--server', page.url], { env: CLEAN_ENV });
      expect(r2.code).toBe(4);
      expect(r2.stderr).toContain('with an HTML page (HTTP 200)');
      await close(page.server);
    } finally {
      await close(proxy.server);
    }
  });

  it('no answer in time: exit 4 after NKLEDGER_TIMEOUT seconds, naming the URL', async () => {
    const silent = await fakeServer(null);
    try {
      const r = await runCli(['list'], { env: { ...CLEAN_ENV, NKLEDGER_SERVER: silent.url, NKLEDGER_TIMEOUT: '0.3' } });
      expect(r.code).toBe(4);
      oneLine(r.stderr);
      expect(r.stderr).toContain(`the nkledger server at ${silent.url} did not answer within 0.3 s`);
      expect(r.stderr).toContain('[server-timeout]');
    } finally {
      await close(silent.server);
    }
  });

  it('a busy server (503 + Retry-After) is asked again a bounded number of times, then reported (exit 4)', async () => {
    const busy = await fakeServer((res) => {
      res.writeHead(503, { 'content-type': 'application/problem+json', 'retry-after': '0' });
      res.end(
        JSON.stringify({
          type: 'urn:nkledger:problem:server-busy',
          title: 'Service Unavailable',
          status: 503,
          detail: 'every compute thread is busy [server-busy]',
          rule: 'server-busy',
        }),
      );
    });
    try {
      const r = await runCli(['list', '--server', busy.url], { env: CLEAN_ENV });
      expect(r.code).toBe(4);
      oneLine(r.stderr);
      expect(r.stderr).toContain(`the nkledger server at ${busy.url} stayed busy (every compute thread is busy); try again later [server-busy]`);
      expect(busy.hits()).toBe(4); // the first request and three retries
    } finally {
      await close(busy.server);
    }
  });

  it('content altered on the way (it no longer hashes to its SHA-256): refused before anything is computed (exit 4)', async () => {
    const alice = lab.env('server', 'alice');
    await runCli(['material', 'add', 'glass', '--name', 'Glass'], { env: alice });
    expect((await runCli(['import', 'data/marrowick/sio2-thermal.csv', '--material', 'glass', '--no-kk'], { env: alice })).code).toBe(0);
    const version = await (await fetch(`${lab.url}/api/v1/refs/glass@1`, { headers: { authorization: `Bearer ${lab.tokens.alice}` } })).json();
    version.content.table.n[0] += 0.001;
    const proxy = await fakeServer((res) => {
      res.writeHead(200, { 'content-type': 'application/json' });
      res.end(JSON.stringify(version));
    });
    try {
      const r = await runCli(['eval', 'glass@1', '--at', '600', '--server', proxy.url], { env: CLEAN_ENV });
      expect(r.code).toBe(4);
      oneLine(r.stderr);
      expect(r.stderr).toContain(`glass@1: the content received from ${proxy.url} does not hash to its SHA-256`);
      expect(r.stderr).toContain('[integrity-hash-mismatch]');
    } finally {
      await close(proxy.server);
    }
  });

  it('a backup whose connection breaks midway: exit 4, and neither the file nor a partial file is left', async () => {
    const cut = await fakeServer((res) => {
      res.writeHead(200, { 'content-type': 'application/vnd.sqlite3', 'x-nkledger-pages': '9', 'content-length': '40960' });
      res.write(Buffer.alloc(4096, 1));
      setTimeout(() => res.socket?.destroy(), 50);
    });
    const dir = mkdtempSync(join(tmpdir(), 'nkledger-backup-cut-'));
    try {
      const r = await runCli(['backup', join(dir, 'lab.db'), '--server', cut.url], { env: CLEAN_ENV });
      expect(r.code).toBe(4);
      oneLine(r.stderr);
      expect(r.stderr).toContain(`the connection to ${cut.url} broke during the backup`);
      expect(r.stderr).toContain('nothing was kept, try again [backup-interrupted]');
      expect(readdirSync(dir)).toEqual([]);
    } finally {
      await close(cut.server);
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('a URL that is not http(s): refused as input (exit 2)', async () => {
    const r = await runCli(['list', '--server', 'ftp://lab-server'], { env: CLEAN_ENV });
    expect(r.code).toBe(2);
    expect(r.stderr).toBe('nkledger: "ftp://lab-server" is not an http:// or https:// address [server-url]\n');
  });

  it('--server wins over NKLEDGER_SERVER, NKLEDGER_SERVER over --db', async () => {
    const dead = `http://127.0.0.1:${await closedPort()}`;
    const viaFlag = await runCli(['list', '--server', lab.url], { env: { ...CLEAN_ENV, NKLEDGER_SERVER: dead } });
    expect(viaFlag.code).toBe(0);
    const viaEnv = await runCli(['list', '--db', lab.fileDb], { env: { ...CLEAN_ENV, NKLEDGER_SERVER: dead } });
    expect(viaEnv.code).toBe(4);
  });
});
