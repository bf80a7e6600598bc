/**
 * SIGTERM with a half-sent upload in flight: the server stops accepting at once, gives the open
 * request its grace (--grace), then closes the connection and exits 0 — it does not wait forever for
 * a client that never finishes. Real `nkledger serve` in a child process, raw TCP for the half upload.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { connect } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { cli, serve } from './processes.ts';

const dir = mkdtempSync(join(tmpdir(), 'nkledger-shutdown-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('SIGTERM', { timeout: 120_000 }, () => {
  it('closes a half-sent upload after the grace and exits 0; new connections are refused meanwhile', async () => {
    const db = join(dir, 'reg.db');
    expect((await cli(['material', 'add', 'glass', '--name', 'Glass', '--db', db], 'lab-editor')).code).toBe(0);
    const server = await serve(db, ['--grace', '2']);
    const { port } = new URL(server.url);
    // Headers promise 100,000 bytes; only 30 are sent.
    const socket = connect(Number(port), '127.0.0.1');
    await new Promise<void>((resolve) => socket.once('connect', () => resolve()));
    let closedByServer = false;
    socket.on('close', () => (closedByServer = true));
    socket.on('error', () => {});
    socket.write('POST /api/v1/kk HTTP/1.1\r\nHost: x\r\nContent-Type: text/csv\r\nContent-Length: 100000\r\n\r\nwavelength_nm,n,k\n400,1.5,0\n');
    await new Promise((r) => setTimeout(r, 300));

    const started = Date.now();
    server.child.kill('SIGTERM');
    await new Promise((r) => setTimeout(r, 300));
    const refused = await fetch(`${server.url}/api/v1/materials`).then(
      () => false,
      () => true,
    );
    expect(refused, 'a new connection after SIGTERM').toBe(true);
    const code = await Promise.race([
      new Promise<number | null>((resolve) => server.child.once('exit', (c) => resolve(c))),
      new Promise<'hung'>((resolve) => setTimeout(() => resolve('hung'), 30_000)),
    ]);
    if (code === 'hung') server.child.kill('SIGKILL');
    expect(code, server.stderr()).toBe(0);
    expect(Date.now() - started).toBeGreaterThanOrEqual(1_500);
    expect(closedByServer).toBe(true);
    expect(server.stderr()).toMatch(/SIGTERM: no new connections; open requests get 2 s/);
    socket.destroy();
  });
});
