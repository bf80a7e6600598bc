/**
 * The OpenAPI 3.1 document of the HTTP API, built from the `OPERATIONS` each routes/ module exports beside its
 * handlers (src/api/operations.ts says how to write one). Every request and answer body schema and every
 * parameter is converted from zod with `z.toJSONSchema` (JSON Schema 2020-12, OpenAPI 3.1's dialect), mostly
 * from the very schemas the handlers validate with. test/api/openapi.test.ts compares the document's
 * operations with the routes the app registers and validates live answers against it.
 */
import { z } from 'zod';
import { ADMIN_OPERATIONS } from './routes/admin.ts';
import { LOCK_OPERATIONS } from './routes/locks.ts';
import { MATERIAL_OPERATIONS } from './routes/materials.ts';
import { NK_OPERATIONS } from './routes/nk.ts';
import { STACK_OPERATIONS } from './routes/stack.ts';
import { ELLIPSOMETRY_OPERATIONS } from './routes/ellipsometry.ts';
import { UPLOAD_OPERATIONS } from './routes/uploads.ts';
import { REF_OPERATIONS } from './routes/refs.ts';
import { json, type BodySchema, type Operation } from './operations.ts';

/** The document's own route (served by routes/openapi.ts). */
const SELF: Operation = {
  method: 'get',
  path: '/api/v1/openapi.json',
  summary: 'This document',
  responses: { 200: json('OpenAPI 3.1 document', { json: { type: 'object', required: ['openapi', 'paths'] } }) },
};

/** Every operation of the API. A new routes/ module adds its OPERATIONS here. */
export const API_OPERATIONS: Operation[] = [
  SELF,
  ...MATERIAL_OPERATIONS,
  ...NK_OPERATIONS,
  ...UPLOAD_OPERATIONS,
  ...LOCK_OPERATIONS,
  ...ADMIN_OPERATIONS,
  ...STACK_OPERATIONS,
  ...ELLIPSOMETRY_OPERATIONS,
  ...REF_OPERATIONS,
];

type JsonSchema = Record<string, unknown>;

/** Converts zod schemas, collecting the ones with a `.meta({ id })` as components (shared by every call). */
class SchemaConverter {
  readonly components: Record<string, JsonSchema> = {};

  convert(schema: BodySchema): JsonSchema {
    if (!(schema instanceof z.ZodType)) return schema.json;
    // io 'input': what a client sends (transforms are invisible) and, for answers, plain z.object stays open
    // to extra members; unrepresentable 'any' keeps a custom check from failing the whole document.
    const out = z.toJSONSchema(schema, { target: 'draft-2020-12', io: 'input', unrepresentable: 'any' }) as JsonSchema;
    const { $schema: _dialect, $defs, ...rest } = out;
    for (const [id, def] of Object.entries(($defs ?? {}) as Record<string, JsonSchema>)) this.addComponent(id, def);
    // A schema that has an id itself comes out as a $ref to its own entry of $defs.
    return relink(rest);
  }

  private addComponent(id: string, schema: JsonSchema): void {
    const linked = relink(schema);
    const known = this.components[id];
    if (known && JSON.stringify(known) !== JSON.stringify(linked)) throw new Error(`two different zod schemas carry the id "${id}"`);
    this.components[id] = linked;
  }

  /** One parameter per member of a zod object; required unless the member is optional. */
  parameters(where: 'path' | 'query' | 'header', object: z.ZodObject | undefined): JsonSchema[] {
    if (!object) return [];
    const converted = this.convert(object) as { properties?: Record<string, JsonSchema>; required?: string[] };
    return Object.entries(converted.properties ?? {}).map(([name, schema]) => {
      const { description, example, ...rest } = schema;
      return {
        name,
        in: where,
        required: where === 'path' || (converted.required ?? []).includes(name),
        schema: rest,
        ...(description !== undefined && { description }),
        ...(example !== undefined && { example }),
      };
    });
  }
}

/** `#/$defs/X` (zod's references) → `#/components/schemas/X` (the document's). */
function relink(schema: JsonSchema): JsonSchema {
  return JSON.parse(JSON.stringify(schema).replaceAll('"#/$defs/', '"#/components/schemas/'));
}

/** hono's `:param` → OpenAPI's `{param}`. */
export const documentPath = (path: string): string => path.replace(/:([A-Za-z_]\w*)/g, '{$1}');

export function buildOpenApiDocument(operations: Operation[]) {
  const schemas = new SchemaConverter();
  const content = (media: Record<string, BodySchema>) =>
    Object.fromEntries(Object.entries(media).map(([type, schema]) => [type, { schema: schemas.convert(schema) }]));
  const paths: Record<string, Record<string, JsonSchema>> = {};
  for (const op of operations) {
    const item = (paths[documentPath(op.path)] ??= {});
    if (item[op.method]) throw new Error(`${op.method.toUpperCase()} ${op.path} is described twice`);
    const parameters = [
      ...schemas.parameters('path', op.params?.path),
      ...schemas.parameters('query', op.params?.query),
      ...schemas.parameters('header', op.params?.header),
    ];
    item[op.method] = {
      summary: op.summary,
      ...(op.description !== undefined && { description: op.description }),
      ...(op.role ? { 'x-nkledger-role': op.role } : { security: [{}] }),
      ...(parameters.length > 0 && { parameters }),
      ...(op.body && {
        requestBody: {
          required: op.body.required,
          content: Object.fromEntries(
            Object.entries(content(op.body.content)).map(([type, media]) => [
              type,
              op.body?.example !== undefined && type === 'application/json' ? { ...media, example: op.body.example } : media,
            ]),
          ),
        },
      }),
      responses: Object.fromEntries(
        Object.entries(op.responses)
          .sort(([a], [b]) => Number(a) - Number(b))
          .map(([status, answer]) => [
            status,
            {
              description: answer.description,
              ...(answer.headers && { headers: answer.headers }),
              ...(answer.content && { content: content(answer.content) }),
            },
          ]),
      ),
    };
  }
  return {
    openapi: '3.1.0',
    info: {
      title: 'nkledger HTTP API',
      version: '1.0.0',
      description:
        'Versioned, approved optical constants (n, k) from the lab registry. The content of approved and retired versions never changes; ' +
        'their ETag names the content SHA-256 and the status, so a retirement changes it. Approved answers may be cached for 60 s, retired ones (final) for a year. ' +
        'Errors are RFC 9457 problem documents. Everywhere: a query parameter given twice, malformed or non-UTF-8 percent-encoding (%ff) and control characters (%00) are 400; ' +
        'numbers are decimal (no 0x1F4); JSON bodies need Content-Type application/json (else 415); a request line and headers over 16 KiB are a 431 problem document. ' +
        'Fits and KK checks run on a bounded pool of worker threads: when it is full, 503 with Retry-After. ' +
        '`x-nkledger-role` names the role an operation needs (reader routes admit anonymous reads when the anonymous_reads setting allows).',
    },
    servers: [{ url: '/' }],
    security: [{ bearer: [] }, {}],
    paths,
    components: {
      securitySchemes: { bearer: { type: 'http', scheme: 'bearer', description: 'token from `nkledger token create` (prefix nkl_)' } },
      schemas: Object.fromEntries(Object.entries(schemas.components).sort(([a], [b]) => a.localeCompare(b))),
    },
  };
}

let built: ReturnType<typeof buildOpenApiDocument> | undefined;

/** The document, built once on first use (the conversion costs a few milliseconds). */
export function openApiDocument(): ReturnType<typeof buildOpenApiDocument> {
  built ??= buildOpenApiDocument(API_OPERATIONS);
  return built;
}

/** The "METHOD /path/{param}" pairs the document describes, sorted; the route-sync test compares these. */
export function documentedOperations(): string[] {
  return API_OPERATIONS.map((op) => `${op.method.toUpperCase()} ${documentPath(op.path)}`).sort();
}
