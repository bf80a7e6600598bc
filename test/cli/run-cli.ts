/**
 * The CLI in-process for tests: `runCli(args)` calls run(argv, io) (src/cli/run.ts) with captured stdout and
 * stderr, optional stdin text and environment, and resolves to the exit code and the text, as a child process
 * would give them. Tests that need a real process (shell pipes, signals, SIGKILL, several processes at once)
 * start `node bin/nkledger.js` instead. Relative paths resolve against the current directory, the project root
 * under `npm test`.
 */
import { Readable } from 'node:stream';
import { fileURLToPath } from 'node:url';
import { run } from '../../src/cli/run.ts';

export const ROOT = fileURLToPath(new URL('../../', import.meta.url));

export interface CliResult {
  code: number;
  stdout: string;
  stderr: string;
}

export interface CliOptions {
  /** Text or bytes on standard input (what `-` reads); default: empty. */
  input?: string | Buffer;
  /** Added to the environment of this run (the process's is not changed). */
  env?: Record<string, string | undefined>;
}

export async function runCli(args: string[], options: CliOptions = {}): Promise<CliResult> {
  let stdout = '';
  let stderr = '';
  const code = await run(args, {
    stdout: { write: (s: string) => (stdout += s) },
    stderr: { write: (s: string) => (stderr += s) },
    stdin: Readable.from(options.input === undefined ? [] : [Buffer.from(options.input)]),
    env: { ...process.env, ...options.env },
  });
  return { code, stdout, stderr };
}
