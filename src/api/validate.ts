/** zod validation of request input, refusing with the same InputError every other front door uses. */
import { z } from 'zod';
import { InputError } from '../errors.ts';
import { NUMBER_PATTERN } from '../io/numbers.ts';
import { HttpProblem } from './problem.ts';

/**
 * A number typed into a query or form field, read with the grammar of table cells and CLI options
 * (io/numbers.ts: decimal, no hex, no NaN or Infinity) and refused when it overflows a double.
 */
export const decimalField = (name: string) =>
  z
    .string()
    .max(64)
    .regex(NUMBER_PATTERN, `${name} must be a number`)
    .transform(Number)
    .refine(Number.isFinite, `${name} overflows a double-precision number`);

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
    if (i.code === 'unrecognized_keys')
      return `${name}: unknown field${i.keys.length > 1 ? 's' : ''} ${i.keys.map((k) => `"${k}"`).join(', ')}${known ? ` (known: ${known.join(', ')})` : ''}`;
    if (i.code === 'invalid_type' && at(value, i.path) === undefined) return `${name}: required`;
    return `${name}: ${i.message}`;
  });
  throw new HttpProblem(status, `invalid-${where}`, issues.join('; '));
}

interface BodyRequest {
  text(): Promise<string>;
  header(name: string): string | undefined;
}

/** application/json or any +json type (RFC 6839); anything else is 415 before the body is read. */
function requireJsonType(req: BodyRequest): void {
  const type = (req.header('content-type') ?? '').split(';')[0].trim().toLowerCase();
  if (type === 'application/json' || /^application\/[a-z0-9.+-]+\+json$/.test(type)) return;
  throw new HttpProblem(415, 'body-media-type', `send the request body as application/json, not "${type || 'no content type'}"`, {
    accept: 'application/json',
  });
}

function parseJsonText(text: string): unknown {
  try {
    return JSON.parse(text);
  } catch (err) {
    throw new InputError('invalid-json', `request body is not JSON: ${(err as Error).message}`, { file: '<request body>' });
  }
}

/** The request body as JSON: 415 for another media type, 400 naming the JSON error for a body that is not JSON. */
export async function readJson(req: BodyRequest): Promise<unknown> {
  requireJsonType(req);
  return parseJsonText(await req.text());
}

/** An optional JSON body: empty (with any or no content type) means `{}`; otherwise as readJson. */
export async function readOptionalJson(req: BodyRequest): Promise<unknown> {
  const text = await req.text();
  if (text.trim() === '') return {};
  requireJsonType(req);
  return parseJsonText(text);
}

const CONTROL = /[\u0000-\u001f\u007f-\u009f]/;

/**
 * The query string as one value per name, read strictly: a name given twice is refused (which one
 * was meant?), as are malformed or non-UTF-8 percent escapes (%ff) and control characters (%00).
 * hono's own c.req.query() keeps the first of two values and passes undecodable escapes through.
 */
export function readQuery(url: string): Record<string, string> {
  const at = url.indexOf('?');
  const out: Record<string, string> = {};
  if (at < 0) return out;
  const hash = url.indexOf('#', at);
  const raw = url.slice(at + 1, hash < 0 ? undefined : hash);
  for (const pair of raw.split('&')) {
    if (pair === '') continue;
    const eq = pair.indexOf('=');
    const decode = (part: string) => {
      try {
        return decodeURIComponent(part.replace(/\+/g, ' '));
      } catch {
        throw new InputError('query-encoding', `query parameter "${pair.slice(0, 60)}": malformed percent-encoding or bytes that are not UTF-8`);
      }
    };
    const name = decode(eq < 0 ? pair : pair.slice(0, eq));
    const value = decode(eq < 0 ? '' : pair.slice(eq + 1));
    if (CONTROL.test(name) || CONTROL.test(value)) {
      throw new InputError('query-control', `query parameter "${name.replace(CONTROL, '?')}": control characters (such as %00) are refused`, {});
    }
    if (Object.hasOwn(out, name)) throw new InputError('query-duplicate', `query parameter "${name}" is given more than once; give it once`, {});
    out[name] = value;
  }
  return out;
}
