/** Turning a thrown value into a message and an exit code, so no stack trace reaches a user. */
import { FLAG_WORDING, InputError } from '../errors.ts';
import { cliIo, setExitCode } from './io.ts';

/** Print the failure to stderr and return the exit code: 2 for bad input, 1 for an internal fault. */
export function reportFailure(err: unknown): number {
  const { stderr, env } = cliIo();
  if (err instanceof InputError) {
    stderr.write(`nkledger: ${err.describe(FLAG_WORDING)}
`);
    return 2;
  }
  const message = err instanceof Error ? err.message : String(err);
  stderr.write(`nkledger: internal error: ${message}\n`);
  if (env.NKLEDGER_DEBUG && err instanceof Error && err.stack) stderr.write(`${err.stack}\n`);
  return 1;
}

/** Wrap a command action so thrown errors become a message and an exit code. */
export function guarded<A extends unknown[]>(action: (...args: A) => Promise<void> | void): (...args: A) => Promise<void> {
  return async (...args: A) => {
    try {
      await action(...args);
    } catch (err) {
      setExitCode(reportFailure(err));
    }
  };
}
