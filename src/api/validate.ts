/** zod validation of request input, refusing with the same InputError every other front door uses. */
import type { z } from 'zod';
import { InputError } from '../errors.ts';

/** The value at `path` inside `value`, or undefined. */
function at(value: unknown, path: PropertyKey[]): unknown {
  let v = value;
  for (const key of path) v = v !== null && typeof v === 'object' ? (v as Record<PropertyKey, unknown>)[key] : undefined;
  return v;
}

/**
 * Parse `value` with `schema`, or throw an InputError (422 for a well-formed body with bad values,
 * 400 for query strings) naming each offending field, e.g. `query.step_nm: must be > 0`,
 * `query.model: required`, `body: unknown field "colour" (known: slug, name, description, tags)`.
 */
export function parseInput<T>(schema: z.ZodType<T>, value: unknown, where: 'body' | 'query', status = 422): T {
  const result = schema.safeParse(value);
  if (result.success) return result.data;
  const known = 'shape' in schema && schema.shape && typeof schema.shape === 'object' ? Object.keys(schema.shape) : null;
  const issues = result.error.issues.map((i) => {
    const name = [where, ...i.path.map(String)].join('.');
    if (i.code === 'unrecognized_keys') return `${name}: unknown field${i.keys.length > 1 ? 's' : ''} ${i.keys.map((k) => `"${k}"`).join(', ')}${known ? ` (known: ${known.join(', ')})` : ''}`;
    if (i.code === 'invalid_type' && at(value, i.path) === undefined) return `${name}: required`;
    return `${name}: ${i.message}`;
  });
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
