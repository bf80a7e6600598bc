/**
 * Where a CLI run reads and writes: standard output and error, standard input, the environment, and the exit
 * code it ends with. `run(argv, io)` (run.ts) sets them for the whole run, including everything the command awaits,
 * through AsyncLocalStorage; the helpers in output.ts and failure.ts write through `cliIo()`. Outside a run they
 * are the process's own, so a command written against them behaves the same in `node bin/nkledger.js` and in a
 * test that calls run() in-process and captures the text.
 */
import { AsyncLocalStorage } from 'node:async_hooks';

export interface TextSink {
  write(text: string): unknown;
}

export interface CliIo {
  stdout: TextSink;
  stderr: TextSink;
  /** What `-` reads. */
  stdin: AsyncIterable<Buffer | string>;
  /** NKLEDGER_DB, NKLEDGER_USER, NKLEDGER_DEBUG are read from here. */
  env: Record<string, string | undefined>;
}

interface RunState {
  io: CliIo;
  exitCode: number;
}

const storage = new AsyncLocalStorage<RunState>();

export function processIo(): CliIo {
  return {
    stdout: process.stdout,
    stderr: process.stderr,
    // A getter: touching process.stdin opens the stream, which only `-` needs.
    get stdin() {
      return process.stdin;
    },
    env: process.env,
  };
}

/** Run `body` with `io` as the current io; resolves to the exit code the run set (0 if none). */
export async function withIo(io: CliIo, body: () => Promise<void>): Promise<number> {
  const state: RunState = { io, exitCode: 0 };
  await storage.run(state, body);
  return state.exitCode;
}

/** The io of the current run (the process's outside a run). */
export function cliIo(): CliIo {
  return storage.getStore()?.io ?? processIo();
}

/** Set the exit code of the current run (the process's outside a run). Commands never call process.exit. */
export function setExitCode(code: number): void {
  const state = storage.getStore();
  if (state) state.exitCode = code;
  else process.exitCode = code;
}
