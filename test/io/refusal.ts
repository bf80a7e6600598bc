/** Test helper: runs an import that must be refused and returns its InputError (fails the test otherwise). */
import { expect } from 'vitest';
import { InputError } from '../../src/errors.ts';

export function refusal(run: () => unknown): InputError {
  try {
    run();
  } catch (err) {
    expect(err).toBeInstanceOf(InputError);
    return err as InputError;
  }
  throw new Error('expected a refusal');
}

/** The same for an asynchronous call: awaits it and returns the InputError it rejects with. */
export async function refusalAsync(run: () => Promise<unknown>): Promise<InputError> {
  try {
    await run();
  } catch (err) {
    expect(err).toBeInstanceOf(InputError);
    return err as InputError;
  }
  throw new Error('expected a refusal');
}
