/**
 * Real processes for the reliability tests: the CLI (bin/nkledger.js) run asynchronously, and
 * `nkledger serve` on 127.0.0.1 with a free port, stopped with SIGTERM. Nothing is mocked.
 */
import { execFile, spawn, type ChildProcess } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { createInterface } from 'node:readline';
import { versionSha256 } from '../../src/registry/records.ts';

export const BIN = new URL('../../bin/nkledger.js', import.meta.url).pathname;

export interface CliResult {
  code: number | null;
  out: string;
  err: string;
}

/** Run `nkledger ARGS` as USER; never rejects. */
export function cli(args: string[], user: string): Promise<CliResult> {
  return new Promise((resolve) => {
    execFile(
      process.execPath,
      [BIN, ...args],
      { encoding: 'utf8', env: { ...process.env, NKLEDGER_USER: user, NKLEDGER_DB: '' }, timeout: 60_000 },
      (error, out, err) => {
        resolve({ code: error ? ((error as { code?: number }).code ?? null) : 0, out, err });
      },
    );
  });
}

export interface ServeProcess {
  url: string;
  child: ChildProcess;
  stderr(): string;
  /** SIGTERM, then wait for the exit; resolves to the exit code. */
  stop(): Promise<number | null>;
}

export function serve(db: string, extraArgs: string[] = []): Promise<ServeProcess> {
  const child = spawn(process.execPath, [BIN, 'serve', '--db', db, '--host', '127.0.0.1', '--port', '0', ...extraArgs], {
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let err = '';
  child.stderr!.on('data', (d) => (err += d));
  const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
  return new Promise((resolve, reject) => {
    child.once('exit', (code) => reject(new Error(`serve exited (${code}): ${err}`)));
    createInterface({ input: child.stdout! }).on('line', (line) => {
      const m = /at (http:\/\/127\.0\.0\.1:\d+)\//.exec(line);
      if (m) {
        resolve({
          url: m[1],
          child,
          stderr: () => err,
          stop: () => {
            child.kill('SIGTERM');
            return exited;
          },
        });
      }
    });
  });
}

/** An invented, smooth n,k table as CSV (not a measurement); `a` sets n's offset so each call differs. */
export function tableCsv(a: number, rows = 60): string {
  const lines = ['wavelength_nm,n,k'];
  for (let i = 0; i < rows; i++) {
    const wl = 400 + 5 * i;
    lines.push(`${wl},${(a + 0.004 / (wl / 1000) ** 2).toFixed(7)},${(0.001 * (400 / wl) ** 4).toFixed(7)}`);
  }
  return `${lines.join('\n')}\n`;
}

export function writeTableFile(dir: string, name: string, a: number): string {
  const path = join(dir, name);
  writeFileSync(path, tableCsv(a));
  return path;
}

/** True when a version as served (JSON with content, provenance, sha256) hashes to its sha256. */
export function servedVersionVerifies(v: { content: unknown; provenance: unknown; sha256: string }): boolean {
  return versionSha256(v.content as never, v.provenance as never) === v.sha256;
}

/**
 * A writer that gave up waiting for another: SQLite's busy error, or PostgreSQL's lock timeout (55P03, "canceling
 * statement due to lock timeout" / "could not obtain lock"), an unresolved deadlock or serialization failure.
 */
export const LOCKED = /database is locked|SQLITE_BUSY|lock timeout|could not obtain lock|deadlock detected|could not serialize access/i;
