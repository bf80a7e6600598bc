/** zod validation of request input, refusing with the same InputError every other front door uses. */
import type { z } from 'zod';
import { InputError } from '../errors.ts';

/**
 * Parse `value` with `schema`, or throw an InputError (422 for a well-formed body with bad values,
 * 400 for query strings) naming the first offending field, e.g. `query.step_nm: must be > 0`.
 */
export function parseInput<T>(schema: z.ZodType<T>, value: unknown, where: 'body' | 'query', status = 422): T {
  const result = schema.safeParse(value);
  if (result.success) return result.data;
  const issues = result.error.issues.map((i) => `${[where, ...i.path.map(String)].join('.')}: ${i.message}`);
  throw new InputError(`invalid-${where}`, issues.join('; '), {}, status);
}

/** The request body as JSON, refusing a body that is not JSON with a 400 naming the JSON error. */
export async function readJson(req: { text(): Promise<string> }): Promise<unknown> {
  const text = await req.text();
  try {
    return JSON.parse(text);
  } catch (err) {
    throw new InputError('invalid-json', `request body is not JSON: ${(err as Error).message}`, { file: '<request body>' }, 400);
  }
}
