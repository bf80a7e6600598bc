/**
 * The OpenAPI 3.1 description of the HTTP API, written by hand as data. test/api/openapi.test.ts
 * compares its paths and methods with the routes the app registers and validates live answers (status,
 * media type, body schema) against it, so the two cannot drift: adding a route without describing it
 * here, or answering a status or shape this document does not list, fails the suite.
 */
import { TOKEN_ROLES } from '../registry/schema-auth.ts';
import { SETTING_KEYS } from '../service/settings.ts';
import { FIT_OPTION_FIELD_DOCS } from './fit-fields.ts';
import { STACK_PATHS } from './stack-openapi.ts';

type Schema = Record<string, unknown>;
const ref = (name: string): Schema => ({ $ref: `#/components/schemas/${name}` });
const problem = (description: string) => ({
  description,
  content: { 'application/problem+json': { schema: ref('Problem') } },
});
const json = (description: string, schema: Schema) => ({ description, content: { 'application/json': { schema } } });

const slugParam = { name: 'slug', in: 'path', required: true, schema: { type: 'string', pattern: '^[a-z0-9]+(-[a-z0-9]+)*$' } };
const versionParam = { name: 'n', in: 'path', required: true, schema: { type: 'integer', minimum: 1 } };
const versionParams = [slugParam, versionParam];

/** Responses every protected route may give. */
const authErrors = {
  '401': problem('no token, a malformed Authorization header, or an unknown or revoked token'),
  '403': problem("the token's role is below the one this route needs"),
};
const readErrors = {
  ...authErrors,
  '400': problem(
    'malformed request: a path segment that is not a slug or version number, a bad query parameter, or (uploads) a table that cannot be read',
  ),
  '404': problem('unknown material or version'),
};
const writeErrors = {
  ...readErrors,
  '409': problem('the change conflicts with the registry rules'),
  '415': problem('the body is not application/json'),
  '422': problem('invalid input'),
  '503': problem('the registry file is read-only, corrupt, busy, or was removed or replaced under the server; nothing was written'),
  '507': problem('the disk holding the registry is full; nothing was written'),
};
/** Routes whose compute runs on the worker pool. */
const busy = {
  '503': {
    description: 'every compute thread is busy and the queue is full; try again after Retry-After seconds',
    headers: { 'Retry-After': { schema: { type: 'integer' } } },
    content: { 'application/problem+json': { schema: ref('Problem') } },
  },
};

/** A route's role, as the `x-nkledger-role` extension (reader routes admit anonymous reads when the setting allows). */
const role = (r: (typeof TOKEN_ROLES)[number]) => ({ 'x-nkledger-role': r });

/** The fit fields, as form fields of TableUpload and as query parameters of text/csv uploads. */
const fitOptionProperties = Object.fromEntries(
  Object.entries(FIT_OPTION_FIELD_DOCS).map(([name, description]) => [name, { type: 'string', description }]),
);
const fitOptionQuery = Object.entries(FIT_OPTION_FIELD_DOCS).map(([name, description]) => ({
  name,
  in: 'query',
  required: false,
  schema: { type: 'string' },
  description,
}));

const tableUpload = {
  description:
    'An n,k table: a text/csv (text/plain, text/tab-separated-values) body with the TableUpload fields as query parameters, ' +
    'or multipart/form-data with a `table` file part and the fields as form fields. Unknown fields are refused.',
  required: true,
  content: {
    'text/csv': { schema: { type: 'string' } },
    'multipart/form-data': { schema: ref('TableUpload') },
  },
};

/** The answer of POST /fit and POST /kk: the report and the import warnings of the uploaded table. */
const reportWith = (report: Schema) => ({
  type: 'object',
  required: ['report', 'warnings'],
  properties: { report, warnings: { type: 'array', items: { type: 'string' } } },
});

const lifecycle = (summary: string, body: 'Reason' | 'OptionalReason' | 'NoBody') => ({
  post: {
    summary,
    ...role('approver'),
    parameters: versionParams,
    requestBody: { required: body === 'Reason', content: { 'application/json': { schema: ref(body) } } },
    responses: { '200': json('the version after the change', ref('Version')), ...writeErrors },
  },
});

export const OPENAPI_DOCUMENT = {
  openapi: '3.1.0',
  info: {
    title: 'nkledger HTTP API',
    version: '1.0.0',
    description:
      'Versioned, approved optical constants (n, k) from the lab registry. The content of approved and retired versions never changes; ' +
      'their ETag names the content SHA-256 and the status, so a retirement changes it. Approved answers may be cached for 60 s, retired ones (final) for a year. ' +
      'Errors are RFC 9457 problem documents. Everywhere: a query parameter given twice, malformed or non-UTF-8 percent-encoding (%ff) and control characters (%00) are 400; ' +
      'numbers are decimal (no 0x1F4); JSON bodies need Content-Type application/json (else 415); a request line and headers over 16 KiB are a 431 problem document. ' +
      'Fits and KK checks run on a bounded pool of worker threads: when it is full, 503 with Retry-After.',
  },
  servers: [{ url: '/' }],
  security: [{ bearer: [] }, {}],
  paths: {
    ...STACK_PATHS,
    '/api/v1/openapi.json': {
      get: { summary: 'This document', security: [{}], responses: { '200': json('OpenAPI 3.1 document', { type: 'object' }) } },
    },
    '/api/v1/materials': {
      get: {
        summary: 'List materials, optionally filtered by a search term',
        ...role('reader'),
        parameters: [{ name: 'q', in: 'query', required: false, schema: { type: 'string', maxLength: 200 } }],
        responses: {
          '200': json('materials', { type: 'object', properties: { materials: { type: 'array', items: ref('Material') } } }),
          ...authErrors,
        },
      },
      post: {
        summary: 'Create a material',
        ...role('editor'),
        requestBody: { required: true, content: { 'application/json': { schema: ref('NewMaterial') } } },
        responses: { '201': json('the new material (Location header gives its URL)', ref('Material')), ...writeErrors },
      },
    },
    '/api/v1/materials/{slug}': {
      get: {
        summary: 'One material with all its versions',
        ...role('reader'),
        parameters: [slugParam],
        responses: {
          '200': json('the material and its versions, oldest first', {
            type: 'object',
            required: ['material', 'versions'],
            properties: { material: ref('Material'), versions: { type: 'array', items: ref('Version') } },
          }),
          ...readErrors,
        },
      },
      patch: {
        summary: "Edit a material's name, description or tags (the slug never changes; audit-logged as material.edit)",
        ...role('editor'),
        parameters: [slugParam],
        requestBody: {
          required: true,
          content: {
            'application/json': {
              schema: {
                type: 'object',
                additionalProperties: false,
                properties: {
                  name: { type: 'string', maxLength: 200 },
                  description: { type: 'string', maxLength: 5000 },
                  tags: { type: 'array', items: { type: 'string', maxLength: 40 }, maxItems: 50, description: 'the whole new tag set' },
                },
              },
            },
          },
        },
        responses: { '200': json('the material, with "changed": the fields that changed', ref('Material')), ...writeErrors },
      },
    },
    '/api/v1/materials/{slug}/versions': {
      post: {
        summary: 'Upload a table as a new draft version (optionally fitted with a model)',
        ...role('editor'),
        parameters: [
          slugParam,
          {
            name: 'fit',
            in: 'query',
            required: false,
            schema: { type: 'string' },
            description: 'model spec to fit and store, e.g. "tauc-lorentz" (text/csv uploads); the other fit fields need it',
          },
          ...fitOptionQuery,
        ],
        requestBody: tableUpload,
        responses: {
          '201': json('the new draft (Location header gives its URL)', ref('CreatedVersion')),
          '413': problem('the body exceeds the max_body_bytes setting'),
          ...writeErrors,
          '415': problem('neither text/csv nor multipart/form-data'),
          ...busy,
        },
      },
    },
    '/api/v1/materials/{slug}/versions/{n}': {
      get: {
        summary: 'One version: content, provenance and reports',
        description:
          'Approved and retired versions: ETag = "<sha256>.<status>"; Cache-Control: public, max-age=60 when approved (it may still be retired), public, max-age=31536000, immutable when retired (private instead of public when the request carries a token); If-None-Match gives 304. ' +
          'Drafts: Cache-Control: no-store. Retired versions carry a Deprecation header (RFC 9745) and a `warnings` entry.',
        ...role('reader'),
        parameters: [...versionParams, { name: 'If-None-Match', in: 'header', required: false, schema: { type: 'string' } }],
        responses: { '200': json('the version', ref('Version')), '304': { description: 'not modified' }, ...readErrors },
      },
    },
    '/api/v1/materials/{slug}/versions/{n}/nk': {
      get: {
        summary: 'n and k of a version at a list or a range of wavelengths',
        description:
          'Give wavelengths_nm (a list, or start:stop:step items), or from_nm, to_nm and step_nm, or at with unit; at most max_nk_points. ' +
          'JSON by default; text/csv when Accept prefers it. Model-backed versions evaluate inside the validity range, table-only versions inside the measured range.',
        ...role('reader'),
        parameters: [
          ...versionParams,
          { name: 'wavelengths_nm', in: 'query', required: false, schema: { type: 'string' }, example: '450,650' },
          { name: 'from_nm', in: 'query', required: false, schema: { type: 'number' } },
          { name: 'to_nm', in: 'query', required: false, schema: { type: 'number' } },
          { name: 'step_nm', in: 'query', required: false, schema: { type: 'number', exclusiveMinimum: 0 } },
          {
            name: 'interpolation',
            in: 'query',
            required: false,
            schema: { type: 'string', enum: ['linear', 'monotone-cubic'] },
            description: 'for table-only versions; model-backed versions evaluate the model',
          },
          {
            name: 'at',
            in: 'query',
            required: false,
            schema: { type: 'string' },
            example: '1.5:4:0.5',
            description: 'points in `unit` (a list or start:stop:step items), instead of wavelengths_nm',
          },
          {
            name: 'unit',
            in: 'query',
            required: false,
            schema: { type: 'string', enum: ['nm', 'um', 'eV', 'cm-1'] },
            description:
              'unit of `at`; the answer keeps wavelength_nm and adds the x column in this unit (energy_eV, wavelength_um, wavenumber_cm-1)',
          },
          {
            name: 'extrapolate',
            in: 'query',
            required: false,
            schema: { type: 'string', enum: ['true', 'false'] },
            description:
              'true: a fitted model is also evaluated beyond its validity range; "extrapolated" marks each value and "warnings" says so. A table never extrapolates',
          },
        ],
        responses: {
          '200': {
            description: 'n,k at the asked wavelengths',
            content: { 'application/json': { schema: ref('NkValues') }, 'text/csv': { schema: { type: 'string' } } },
          },
          '304': { description: 'not modified' },
          ...readErrors,
          '400': problem('bad wavelengths or too many points (setting max_nk_points), or a malformed slug or version number'),
          '406': problem('Accept names neither JSON nor CSV'),
          '431': problem('the URL is too long: use POST with a JSON body'),
        },
      },
      post: {
        summary: 'n and k of a version at wavelengths given in a JSON body (lists too long for a URL)',
        description:
          'The fields of the GET query as JSON; wavelengths_nm may be an array of numbers or the same text as in the query. At most max_nk_points. ' +
          'The answer is the GET answer with Cache-Control: no-store.',
        ...role('reader'),
        parameters: versionParams,
        requestBody: {
          required: true,
          content: {
            'application/json': {
              schema: {
                type: 'object',
                additionalProperties: false,
                properties: {
                  wavelengths_nm: { oneOf: [{ type: 'array', items: { type: 'number', exclusiveMinimum: 0 } }, { type: 'string' }] },
                  from_nm: { type: 'number' },
                  to_nm: { type: 'number' },
                  step_nm: { type: 'number', exclusiveMinimum: 0 },
                  interpolation: { type: 'string', enum: ['linear', 'monotone-cubic'] },
                },
              },
              example: { wavelengths_nm: [450, 550, 650] },
            },
          },
        },
        responses: {
          '200': {
            description: 'n,k at the asked wavelengths',
            content: { 'application/json': { schema: ref('NkValues') }, 'text/csv': { schema: { type: 'string' } } },
          },
          ...readErrors,
          '400': problem('too many points (setting max_nk_points), or a malformed slug or version number'),
          '406': problem('Accept names neither JSON nor CSV'),
          '415': problem('the body is not application/json'),
          '422': problem('bad wavelengths'),
        },
      },
    },
    '/api/v1/materials/{slug}/versions/{n}/approve': lifecycle(
      'Approve a draft (not by its creator, unless the registry allows self-approval)',
      'NoBody',
    ),
    '/api/v1/materials/{slug}/versions/{n}/retire': lifecycle('Retire an approved version (reason required)', 'Reason'),
    '/api/v1/materials/{slug}/versions/{n}/withdraw': lifecycle('Withdraw a draft (reason optional)', 'OptionalReason'),
    '/api/v1/locks/verify': {
      post: {
        summary: 'Verify a design lockfile against the registry',
        description:
          'Answers 200 with `ok` false when an entry is missing or its hash differs; retired, draft and withdrawn pins are warnings, failures with strict=true.',
        ...role('reader'),
        parameters: [{ name: 'strict', in: 'query', required: false, schema: { type: 'string', enum: ['true', 'false'] } }],
        requestBody: { required: true, content: { 'application/json': { schema: { type: 'object' } } } },
        responses: {
          '200': json(
            "per-pin verdicts (each pin's hash recomputed from the content) and `history`: whether the registry's audit chain still contains the lockfile's registry_head",
            ref('LockVerification'),
          ),
          '400': problem('not a lockfile'),
          '415': problem('the body is not application/json'),
          ...authErrors,
        },
      },
    },
    '/api/v1/fit': {
      post: {
        summary: 'Fit a dispersion model to an uploaded table; nothing is stored',
        ...role('reader'),
        parameters: [
          {
            name: 'model',
            in: 'query',
            required: false,
            schema: { type: 'string' },
            description: 'model spec for text/csv uploads (multipart: a form field)',
          },
          ...fitOptionQuery,
        ],
        requestBody: tableUpload,
        responses: {
          '200': json('fit report', reportWith(ref('FitReport'))),
          '400': problem('malformed table'),
          '422': problem('the fit failed'),
          ...authErrors,
          ...busy,
        },
      },
    },
    '/api/v1/kk': {
      post: {
        summary: 'Kramers-Kronig consistency check of an uploaded table; nothing is stored',
        ...role('reader'),
        requestBody: tableUpload,
        responses: { '200': json('KK report', reportWith(ref('KkReport'))), '400': problem('malformed table'), ...authErrors, ...busy },
      },
    },
    '/api/v1/tokens': {
      get: {
        summary: 'List tokens (never secrets)',
        ...role('admin'),
        responses: {
          '200': json('tokens', { type: 'object', required: ['tokens'], properties: { tokens: { type: 'array', items: ref('Token') } } }),
          ...authErrors,
        },
      },
      post: {
        summary: 'Create a token; the secret is in this response only',
        ...role('admin'),
        requestBody: {
          required: true,
          content: {
            'application/json': {
              schema: { type: 'object', required: ['user', 'role'], properties: { user: { type: 'string' }, role: { enum: [...TOKEN_ROLES] } } },
            },
          },
        },
        responses: {
          '201': json('the token with its secret', {
            allOf: [ref('Token'), { type: 'object', required: ['token'], properties: { token: { type: 'string', pattern: '^nkl_' } } }],
          }),
          ...writeErrors,
        },
      },
    },
    '/api/v1/tokens/{id}/revoke': {
      post: {
        summary: 'Revoke a token',
        ...role('admin'),
        parameters: [{ name: 'id', in: 'path', required: true, schema: { type: 'string' } }],
        responses: { '200': json('the revoked token', ref('Token')), ...writeErrors },
      },
    },
    '/api/v1/settings': {
      get: {
        summary: 'Every setting of the registry and the API (the registry rule allow_self_approval included)',
        ...role('admin'),
        responses: { '200': json('settings', ref('Settings')), ...authErrors },
      },
    },
    '/api/v1/settings/{key}': {
      put: {
        summary: 'Change a setting',
        ...role('admin'),
        parameters: [{ name: 'key', in: 'path', required: true, schema: { type: 'string', enum: SETTING_KEYS } }],
        requestBody: {
          required: true,
          content: { 'application/json': { schema: { type: 'object', required: ['value'], properties: { value: {} } } } },
        },
        responses: { '200': json('settings after the change', ref('Settings')), ...writeErrors },
      },
      delete: {
        summary: 'Reset a setting to its default',
        ...role('admin'),
        parameters: [{ name: 'key', in: 'path', required: true, schema: { type: 'string', enum: SETTING_KEYS } }],
        responses: { '200': json('settings after the change', ref('Settings')), ...writeErrors },
      },
    },
  },
  components: {
    securitySchemes: { bearer: { type: 'http', scheme: 'bearer', description: 'token from `nkledger token create` (prefix nkl_)' } },
    schemas: {
      Problem: {
        type: 'object',
        required: ['type', 'title', 'status', 'detail'],
        properties: {
          type: { type: 'string', format: 'uri' },
          title: { type: 'string' },
          status: { type: 'integer' },
          detail: { type: 'string', description: '"file:line:col: message [rule]" for a refused upload' },
          rule: { type: 'string' },
          file: { type: 'string' },
          line: { type: 'integer' },
          column: { type: 'integer' },
        },
      },
      NewMaterial: {
        type: 'object',
        required: ['slug', 'name'],
        properties: {
          slug: { type: 'string' },
          name: { type: 'string' },
          description: { type: 'string' },
          tags: { type: 'array', items: { type: 'string' } },
        },
      },
      Material: { type: 'object', required: ['slug', 'name'], properties: { slug: { type: 'string' }, name: { type: 'string' } } },
      Version: {
        type: 'object',
        required: ['ref', 'sha256', 'status'],
        properties: {
          ref: { type: 'string' },
          sha256: { type: 'string' },
          status: { enum: ['draft', 'approved', 'retired', 'withdrawn'] },
          warning: { type: 'string' },
        },
      },
      CreatedVersion: {
        type: 'object',
        required: ['ref', 'sha256', 'status'],
        properties: { ref: { type: 'string', example: 'sin-pecvd-a@3' }, sha256: { type: 'string' }, status: { const: 'draft' } },
      },
      TableUpload: {
        type: 'object',
        required: ['table'],
        properties: {
          table: { type: 'string', format: 'binary' },
          fit: { type: 'string', description: 'model spec to fit and store with the version (a version upload); POST /fit names it model' },
          model: { type: 'string', description: 'model spec (POST /fit only)' },
          ...fitOptionProperties,
          input_unit: { type: 'string', description: "unit of the table's x column: nm, um, A, eV, cm-1 (overrides the header)" },
          columns: { type: 'string', description: 'comma-separated column names, e.g. wavelength,n,k' },
          delimiter: { type: 'string' },
          decimal_comma: { type: 'string', enum: ['true', 'false'] },
          k_tolerance: { type: 'string' },
          header_line: {
            type: 'string',
            description: 'the header is this physical line (from 1); lines above it are the preamble (default: detected)',
          },
          allow_any_range: {
            type: 'string',
            enum: ['true', 'false'],
            description: 'true: accept x values outside 10 nm – 1 mm (genuine EUV or THz data)',
          },
          sample: { type: 'string' },
          substrate: { type: 'string' },
          process: { type: 'string' },
          instrument: { type: 'string' },
          method: { type: 'string' },
          angles_deg: { type: 'string' },
          measured_on: { type: 'string', format: 'date' },
          operator: { type: 'string' },
          notes: { type: 'string' },
          source_file: { type: 'string', description: 'default: the file part name' },
          kk: { type: 'string', enum: ['true', 'false'], description: 'false: skip the Kramers-Kronig check (a version upload)' },
        },
      },
      Reason: { type: 'object', required: ['reason'], additionalProperties: false, properties: { reason: { type: 'string', minLength: 1 } } },
      OptionalReason: { type: 'object', additionalProperties: false, properties: { reason: { type: 'string' } } },
      NoBody: { type: 'object', additionalProperties: false, description: 'empty, or {}' },
      FitReport: {
        type: 'object',
        required: ['model', 'parameters', 'statistics', 'range_nm'],
        properties: {
          model: { type: 'string' },
          parameters: {
            type: 'object',
            additionalProperties: {
              type: 'object',
              required: ['value', 'unit'],
              properties: { value: { type: 'number' }, stderr: { type: ['number', 'null'] }, unit: { type: 'string' } },
            },
          },
          statistics: { type: 'object', required: ['points'], properties: { points: { type: 'integer' } } },
          range_nm: { type: 'array', items: { type: 'number' }, minItems: 2, maxItems: 2 },
        },
      },
      KkReport: {
        type: 'object',
        required: ['verdict', 'summary', 'tolerance', 'rms_dn', 'max_dn', 'worst_nm', 'bands'],
        properties: {
          verdict: { enum: ['consistent', 'inconsistent', 'uninformative'] },
          summary: { type: 'string' },
          tolerance: { type: 'number' },
          rms_dn: { type: 'number' },
          max_dn: { type: 'number' },
          worst_nm: { type: 'number' },
          bands: { type: 'array', items: { type: 'object', required: ['band', 'points'] } },
        },
      },
      LockVerification: {
        type: 'object',
        required: ['ok', 'strict', 'entries', 'history', 'failures', 'warnings'],
        properties: {
          ok: { type: 'boolean' },
          history: {
            type: 'object',
            description: "whether the registry's audit chain still contains the lockfile's registry_head (docs/registry.md)",
            required: ['outcome', 'locked_head', 'registry_head', 'failed', 'message'],
            properties: {
              outcome: { type: 'string', enum: ['ok', 'rewritten', 'broken', 'not-recorded'] },
              locked_head: { type: ['object', 'null'] },
              registry_head: { type: ['object', 'null'] },
              failed: { type: 'boolean' },
              message: { type: 'string' },
            },
          },
          strict: { type: 'boolean' },
          failures: { type: 'integer', minimum: 0 },
          warnings: { type: 'integer', minimum: 0 },
          entries: {
            type: 'array',
            items: {
              type: 'object',
              required: ['ref', 'outcome', 'failed', 'message'],
              properties: { ref: { type: 'string' }, outcome: { type: 'string' }, failed: { type: 'boolean' }, message: { type: 'string' } },
            },
          },
        },
      },
      Token: {
        type: 'object',
        required: ['id', 'user', 'role', 'created_at', 'revoked_at'],
        properties: {
          id: { type: 'string' },
          user: { type: 'string' },
          role: { enum: [...TOKEN_ROLES] },
          created_at: { type: 'string', format: 'date-time' },
          created_by: { type: 'string' },
          revoked_at: { type: ['string', 'null'] },
          revoked_by: { type: ['string', 'null'] },
        },
      },
      Settings: {
        type: 'object',
        required: ['settings'],
        properties: {
          settings: {
            type: 'object',
            required: [...SETTING_KEYS],
            properties: Object.fromEntries(SETTING_KEYS.map((key) => [key, {}])),
            additionalProperties: false,
          },
        },
      },
      NkValues: {
        type: 'object',
        required: ['wavelength_nm', 'n', 'k'],
        properties: {
          wavelength_nm: { type: 'array', items: { type: 'number' } },
          n: { type: 'array', items: { type: 'number' } },
          k: { type: 'array', items: { type: 'number' } },
        },
      },
    },
  },
} as const;

/** The "METHOD /path/{param}" pairs the document describes, sorted; the route-sync test compares these. */
export function documentedOperations(): string[] {
  const ops: string[] = [];
  for (const [path, item] of Object.entries(OPENAPI_DOCUMENT.paths)) {
    for (const method of Object.keys(item)) ops.push(`${method.toUpperCase()} ${path}`);
  }
  return ops.sort();
}
