/** The InputError a call refuses with (the test fails when it does not refuse), shared by the stack tests. */
import { InputError } from '../../src/errors.ts';

export function refusal(fn: () => unknown): InputError {
  try {
    fn();
  } catch (err) {
    if (err instanceof InputError) return err;
    throw err;
  }
  throw new Error('expected a refusal');
}

export async function refusalAsync(fn: () => Promise<unknown>): Promise<InputError> {
  try {
    await fn();
  } catch (err) {
    if (err instanceof InputError) return err;
    throw err;
  }
  throw new Error('expected a refusal');
}
