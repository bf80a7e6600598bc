/**
 * How a route describes itself in the OpenAPI document. Each routes/ module exports an `OPERATIONS` array
 * beside the handlers it registers; src/api/openapi.ts turns every entry into the document, converting the zod
 * schemas (the same ones the handlers validate with) to JSON Schema with zod's `z.toJSONSchema`, so limits,
 * enums and required fields cannot drift from what the server accepts. A zod schema given `.meta({ id: 'X' })`
 * becomes the component `#/components/schemas/X` wherever it is used.
 */
import { z } from 'zod';
import type { TokenRole } from '../registry/schema-auth.ts';
import { MAX_SLUG_LENGTH, SLUG_PATTERN } from '../registry/refs.ts';

/** A media type's body: a zod schema, or a JSON Schema written as data (only where no zod schema exists, e.g. CSV text). */
export type BodySchema = z.ZodType | { json: Record<string, unknown> };

export interface Answer {
  description: string;
  /** Media type → body schema; absent for an answer without a body (304). */
  content?: Record<string, BodySchema>;
  headers?: Record<string, { description?: string; schema: Record<string, unknown> }>;
}

export interface Operation {
  method: 'get' | 'post' | 'put' | 'patch' | 'delete';
  /** The path as registered with hono (`/api/v1/materials/:slug`); the document spells it `{slug}`. */
  path: string;
  summary: string;
  description?: string;
  /** The role the route requires (`x-nkledger-role`); absent for routes open to anyone (the document itself). */
  role?: TokenRole;
  /** zod objects of the path, query and header parameters: one parameter per key, required unless optional. */
  params?: { path?: z.ZodObject; query?: z.ZodObject; header?: z.ZodObject };
  body?: { required: boolean; content: Record<string, BodySchema>; example?: unknown };
  /** Status → answer; every status the route can give (the live-answer test fails on an unlisted one). */
  responses: Record<number, Answer>;
}

/** The RFC 9457 problem document every refusal is (src/api/problem.ts). */
export const PROBLEM_SCHEMA = z
  .object({
    type: z.string().meta({ format: 'uri' }),
    title: z.string(),
    status: z.number().int(),
    detail: z.string().describe('"file:line:col: message [rule]", as the CLI prints it'),
    rule: z.string().describe("nkledger's rule id"),
    file: z.string().optional(),
    line: z.number().int().optional(),
    column: z.number().int().optional(),
    field: z.string().optional(),
    option: z.string().optional().describe('the field at fault'),
    value: z.string().optional().describe('the refused value'),
    remedies: z
      .array(z.object({ option: z.string(), value: z.union([z.string(), z.literal(false)]).optional() }))
      .optional()
      .describe('fields that get past the refusal'),
  })
  .meta({ id: 'Problem' });

export const json = (description: string, schema: BodySchema): Answer => ({ description, content: { 'application/json': schema } });
export const problem = (description: string): Answer => ({ description, content: { 'application/problem+json': PROBLEM_SCHEMA } });

/** Answers every protected route may give (the front door: token, role). */
export const AUTH_ERRORS = {
  401: problem('no token, a malformed Authorization header, or an unknown or revoked token'),
  403: problem("the token's role is below the one this route needs"),
};
export const READ_ERRORS = {
  ...AUTH_ERRORS,
  400: problem('a path segment that is not a slug or version number, or a bad query parameter'),
  404: problem('unknown material or version'),
};
/** Answers of a route that writes the registry from a JSON body. */
export const WRITE_ERRORS = {
  ...READ_ERRORS,
  409: problem('the change conflicts with the registry rules'),
  413: problem('the body exceeds the max_body_bytes setting'),
  415: problem('the body is not application/json'),
  422: problem('invalid input: a field out of its limits, an unknown or missing field'),
  503: problem('the registry file is read-only, corrupt, busy, or was removed or replaced under the server; nothing was written'),
  507: problem('the disk holding the registry is full; nothing was written'),
};
/** A route whose compute runs on the worker pool (src/service/compute-pool.ts). */
export const BUSY = {
  503: {
    ...problem('every compute thread is busy and the queue is full; try again after Retry-After seconds'),
    headers: { 'Retry-After': { schema: { type: 'integer' } } },
  },
};

/** Path parameters, as checked by the routes (checkSlug, versionRef). */
export const SLUG = z.string().max(MAX_SLUG_LENGTH).regex(SLUG_PATTERN);
export const VERSION_NUMBER_PATTERN = /^[1-9][0-9]{0,8}$/;
export const SLUG_PATH = z.object({ slug: SLUG });
export const VERSION_PATH_PARAMS = z.object({ slug: SLUG, n: z.string().regex(VERSION_NUMBER_PATTERN).describe('version number, from 1') });

/** `true`/`false` as a query or form field. */
export const BOOLEAN_TEXT = z.enum(['true', 'false']);
