/** Turning a thrown value into a message and an exit code, so no stack trace reaches a user. */
import { EnvironmentError, FLAG_WORDING, InputError, type Wording } from '../errors.ts';
import { environmentFault } from '../registry/faults.ts';
import { cliIo, setExitCode } from './io.ts';

/**
 * What to do next after a refusal, in the command line's terms, by the refusal's rule: the core words the
 * refusal and the command line adds its own commands and flags.
 */
const NEXT_STEPS: Record<string, (refusal: InputError) => string | undefined> = {
  'registry-missing': () => 'check --db or NKLEDGER_DB; `nkledger material add` or `nkledger import` creates one',
  'material-unknown': (r) => `\`nkledger list\` lists them; \`nkledger material add ${r.value ?? 'SLUG'} --name NAME\` creates it`,
  'lock-missing': (r) => `start one with \`nkledger lock add REF --lock ${r.location.file ?? 'FILE'}\``,
  'writes-server-only': () => 'give --server URL (or set NKLEDGER_SERVER) and log in',
  'writes-setting-server': () => 'nkledger settings set writes VALUE --server URL',
  'model-not-finite': () => 'the parameters and their units: `nkledger fit --help`',
  'two-person-rule': () => '`nkledger settings set allow_self_approval on` sets it',
  'stack-lock-mismatch': () => '`nkledger lock verify --lock LOCKFILE` says what changed',
  'stack-lock-missing': () => '`nkledger lock add REF --lock LOCKFILE` pins it',
  'version-without-table': (r) => `\`nkledger eval ${r.value ?? 'REF'} --at …\` evaluates it, \`nkledger show ${r.value ?? 'REF'}\` shows it`,
  'source-not-found': () => '`nkledger list` lists the materials; --db PATH or NKLEDGER_DB names the registry',
  'token-not-found': () => '`nkledger token list` lists them',
  'stack-model-parameters': () => 'the parameters of each model: `nkledger fit --help`',
};

/** The command line's wording of a refusal: options as flags, remedies as flags, and its next steps. */
export const CLI_WORDING: Wording = { ...FLAG_WORDING, hint: (refusal) => NEXT_STEPS[refusal.rule]?.(refusal) };

/** Exit code of an environment fault: disk full, registry read-only, corrupt, removed or replaced. */
export const ENVIRONMENT_FAULT_EXIT = 4;

/**
 * Print the failure to stderr and return the exit code: 2 for bad input, 4 for a fault of the environment
 * (SQLite's own reports of one included), 1 for an internal fault.
 */
export function reportFailure(err: unknown): number {
  if (err instanceof InputError) {
    cliIo().stderr.write(`nkledger: ${err.describe(CLI_WORDING)}\n`);
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
