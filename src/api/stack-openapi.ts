/** The OpenAPI description of POST /api/v1/stack (spread into the paths of openapi.ts). */
import { STACK_POLARIZATIONS } from '../service/stack.ts';
import { stackDesignJsonSchema } from '../service/stack-design.ts';

const problem = (description: string) => ({
  description,
  content: { 'application/problem+json': { schema: { $ref: '#/components/schemas/Problem' } } },
});
const colour = {
  type: 'object',
  properties: Object.fromEntries(
    ['X', 'Y', 'Z', 'x', 'y', 'L', 'a', 'b']
      .map((k) => [k, { type: ['number', 'null'] }])
      .concat([
        ['srgb_hex', { type: 'string', pattern: '^#[0-9a-f]{6}$' }],
        ['in_gamut', { type: 'boolean' }],
      ] as never),
  ),
};
const numbers = { type: 'array', items: { type: 'number' } };
const { $schema: _dialect, $id: _id, ...design } = stackDesignJsonSchema();

export const STACK_PATHS = {
  '/api/v1/stack': {
    post: {
      summary: 'Reflectance, transmittance, absorptance, Ψ/Δ and colour of a thin-film stack design; nothing is stored',
      description:
        'The body is a stack design (the JSON Schema of schemas/stack-design.schema.json), or {"design": DESIGN, "lock": LOCKFILE} to resolve ' +
        'its registry refs through a lockfile (refused when they disagree). {"file": …} sources are refused: the server\'s disk is not the client\'s. ' +
        'The work, layers × wavelengths × angles × sweep steps (each at least 1), is capped by the max_stack_work setting. ' +
        'R, T, A are fractions 0–1; colour is CIE 1931 2° under D65 on 380–780 nm at 5 nm, null (with a warning) when a material does not cover it. ' +
        "Ψ, Δ: Azzam & Bashara, N = n − ik (registry k ≥ 0), Δ in [0, 360); they ignore an incoherent substrate's back surface. " +
        'Accept: image/svg+xml answers the plot of `nkledger stack --plot` instead of JSON.',
      'x-nkledger-role': 'reader',
      parameters: [
        {
          name: 'at',
          in: 'query',
          required: true,
          schema: { type: 'string' },
          example: '380:780:5',
          description: 'wavelengths in nm: a list and/or start:stop:step grids, as --at',
        },
        {
          name: 'angle',
          in: 'query',
          required: false,
          schema: { type: 'string' },
          example: '0,45,70',
          description: 'angles of incidence, degrees, comma-separated (default 0)',
        },
        { name: 'polarization', in: 'query', required: false, schema: { type: 'string', enum: [...STACK_POLARIZATIONS] } },
        {
          name: 'sweep',
          in: 'query',
          required: false,
          schema: { type: 'string' },
          example: '1=0:600:5',
          description: 'LAYER=START:STOP:STEP: colour against the thickness (nm) of a layer (1-based)',
        },
        {
          name: 'extrapolate',
          in: 'query',
          required: false,
          schema: { type: 'string', enum: ['true', 'false'] },
          description: 'evaluate model sources outside their validity range',
        },
      ],
      requestBody: {
        required: true,
        content: {
          'application/json': {
            schema: {
              oneOf: [
                design,
                {
                  type: 'object',
                  required: ['design'],
                  additionalProperties: false,
                  properties: { design: { type: 'object' }, lock: { type: 'object', description: 'an nkledger lockfile' } },
                },
              ],
            },
          },
        },
      },
      responses: {
        '200': {
          description: 'one result per angle',
          content: {
            'application/json': {
              schema: {
                type: 'object',
                required: ['design', 'materials', 'results'],
                properties: {
                  design: { type: 'object' },
                  materials: {
                    type: 'array',
                    items: {
                      type: 'object',
                      properties: {
                        role: { type: 'string' },
                        source: { enum: ['registry', 'file', 'constant', 'model'] },
                        ref: { type: ['string', 'null'] },
                        sha256: { type: ['string', 'null'] },
                      },
                    },
                  },
                  notes: { type: 'array', items: { type: 'string' } },
                  warnings: { type: 'array', items: { type: 'string' } },
                  results: {
                    type: 'array',
                    items: {
                      type: 'object',
                      properties: {
                        angle_deg: { type: 'number' },
                        wavelength_nm: numbers,
                        R: numbers,
                        T: numbers,
                        A: numbers,
                        Rs: numbers,
                        Rp: numbers,
                        Ts: numbers,
                        Tp: numbers,
                        psi_deg: numbers,
                        delta_deg: numbers,
                        colour: { oneOf: [{ type: 'null' }, { type: 'object', properties: { reflected: colour, transmitted: colour } }] },
                        sweep: {
                          type: 'object',
                          properties: {
                            layer: { type: 'integer' },
                            rows: {
                              type: 'array',
                              items: { type: 'object', properties: { thickness_nm: { type: 'number' }, reflected: colour, transmitted: colour } },
                            },
                          },
                        },
                      },
                    },
                  },
                },
              },
            },
            'image/svg+xml': { schema: { type: 'string' } },
          },
        },
        '400': problem('bad design, option or wavelengths; a file source; a material that does not cover a wavelength; work over max_stack_work'),
        '401': problem('no token, a malformed Authorization header, or an unknown or revoked token'),
        '403': problem("the token's role is below the one this route needs"),
        '404': problem('unknown material or version'),
        '406': problem('Accept names neither JSON nor SVG'),
        '503': problem('every compute thread is busy and the queue is full (Retry-After)'),
        '422': problem('the body is not a design'),
      },
    },
  },
};
