/** Turning a thrown value into a message and an exit code, so no stack trace reaches a user. */
import { EnvironmentError, FLAG_WORDING, InputError } from '../errors.ts';
import { environmentFault } from '../registry/faults.ts';
import { cliIo, setExitCode } from './io.ts';

/** Exit code of an environment fault: disk full, registry read-only, corrupt, removed or replaced. */
export const ENVIRONMENT_FAULT_EXIT = 4;

/**
 * Print the failure to stderr and return the exit code: 2 for bad input, 4 for a fault of the environment
 * (SQLite's own reports of one included), 1 for an internal fault.
 */
export function reportFailure(err: unknown): number {
  if (err instanceof InputError) {
    cliIo().stderr.write(`nkledger: ${err.describe(FLAG_WORDING)}\n`);
    return 2;
  }
  const fault = err instanceof EnvironmentError ? err : environmentFault(err, cliIo().env.NKLEDGER_DB || 'database');
  if (fault) {
    cliIo().stderr.write(`nkledger: ${fault.describe()}\n`);
    return ENVIRONMENT_FAULT_EXIT;
  }
  const message = err instanceof Error ? err.message : String(err);
  cliIo().stderr.write(`nkledger: internal error: ${message}\n`);
  if (cliIo().env.NKLEDGER_DEBUG && err instanceof Error && err.stack) cliIo().stderr.write(`${err.stack}\n`);
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
