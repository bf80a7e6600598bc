/**
 * The stack design file (JSON): what a coating is made of, layer by layer, with every material named by a
 * source. The zod schema below is the one definition; schemas/stack-design.schema.json is generated from it
 * (`npx tsx scripts/write-stack-schema.ts`, kept equal by test/stack/design.test.ts) for editors and tools.
 *
 *   { "name", "notes", "ambient": {"material": SOURCE}, "layers": [{"material": SOURCE, "thickness_nm": 100}, …],
 *     "substrate": {"material": SOURCE, "thickness_mm": 1, "incoherent": true} }
 *
 * SOURCE: {"ref": "slug@3" | "slug@sha256:…" | "slug"}, {"file": "path.csv"} (relative to the design file),
 * {"n": 1.38, "k": 0}, {"model": "sellmeier", "parameters": {…}} (any catalogue model), or
 * {"mix": "bruggeman" | "maxwell-garnett", "materials": [SOURCE, SOURCE], "fraction": f} (nested sources allowed).
 * Refusals name the file, line and column of the offending value (jsonc-parser gives the positions).
 */
import { findNodeAtLocation, parseTree, printParseErrorCode, type ParseError } from 'jsonc-parser/lib/esm/main.js'; // the ES module build: the UMD main loads its parts by a require() a bundle cannot follow
import { z } from 'zod';
import { InputError } from '../errors.ts';
import { EMA_RULES, type EmaRule } from '../stack/effective-medium.ts';

const refSource = z
  .strictObject({ ref: z.string().min(1).describe('registry version: slug@N, slug@sha256:PREFIX, or a bare slug (latest approved; not a pin)') })
  .describe('a registry version');
const fileSource = z
  .strictObject({ file: z.string().min(1).describe('n,k table file, relative to the design file; read by the n,k importer') })
  .describe('a table file (CLI only: the HTTP API refuses it)');
const constantSource = z
  .strictObject({
    n: z.number().positive().describe('refractive index'),
    k: z.number().min(0).default(0).describe('extinction coefficient, k ≥ 0 (default 0)'),
  })
  .describe('a constant n, k at every wavelength');
const modelSource = z
  .strictObject({
    model: z.string().min(1).describe('catalogue model spec, e.g. "sellmeier", "cauchy", "tauc-lorentz+drude"'),
    parameters: z.record(z.string(), z.number()).describe('parameter values by name, in the units of the model catalogue'),
    terms: z.number().int().min(1).optional().describe('number of terms/oscillators (default: inferred from the parameter names)'),
    urbach: z.boolean().optional().describe('Cauchy with the Urbach tail (default: inferred from the parameter names)'),
    range_nm: z
      .tuple([z.number().positive(), z.number().positive()])
      .optional()
      .describe('validity range [min, max] in nm; outside it the model is refused unless extrapolation is asked for'),
  })
  .describe('a dispersion model of the catalogue with given parameters');

const layerSource = z
  .strictObject({
    layer: z
      .number()
      .int()
      .min(1)
      .describe(
        'number of another layer of the design (from 1 on the ambient side) whose material this is, e.g. the film a roughness layer roughens',
      ),
  })
  .describe("another layer's material (its fitted parameters feed this source too)");

// A mixture names two sources, which may be mixtures themselves: the getter makes the schema recursive (zod 4).
const mixSource = z
  .strictObject({
    mix: z
      .enum(EMA_RULES, { error: `mix is one of ${EMA_RULES.map((r) => `"${r}"`).join(', ')}` })
      .describe('effective-medium rule (spherical inclusions, Aspnes 1982)'),
    get materials() {
      return z
        .array(MATERIAL_SOURCE_SCHEMA)
        .length(2, { error: 'a mixture takes exactly two materials: [FIRST, SECOND]' })
        .describe('the two materials; for maxwell-garnett the first is the host, the second the inclusions');
    },
    fraction: z
      .number()
      .min(0, { error: 'fraction is a volume fraction, 0 ≤ fraction ≤ 1' })
      .max(1, { error: 'fraction is a volume fraction, 0 ≤ fraction ≤ 1' })
      .describe('volume fraction of the second material, 0–1'),
  })
  .describe('an effective-medium mixture of two materials');

export const MATERIAL_SOURCE_SCHEMA: z.ZodType<MaterialSourceInput> = z
  .union([refSource, fileSource, constantSource, modelSource, mixSource, layerSource])
  .meta({ id: 'MaterialSource', description: "where a medium's n, k come from" });

type MaterialSourceInput =
  | z.infer<typeof refSource>
  | z.infer<typeof fileSource>
  | z.infer<typeof constantSource>
  | z.infer<typeof modelSource>
  | z.infer<typeof layerSource>
  | { mix: EmaRule; materials: MaterialSourceInput[]; fraction: number };

const SOURCE_BRANCHES: Array<[string, z.ZodType]> = [
  ['ref', refSource],
  ['file', fileSource],
  ['model', modelSource],
  ['mix', mixSource],
  ['layer', layerSource],
  ['n', constantSource],
];

export const STACK_DESIGN_SCHEMA = z
  .strictObject({
    $schema: z.string().optional().describe('optional pointer to schemas/stack-design.schema.json, for editors'),
    name: z.string().max(200).optional().describe('name of the design'),
    notes: z.string().max(20_000).optional().describe('free text'),
    ambient: z
      .strictObject({ material: MATERIAL_SOURCE_SCHEMA })
      .optional()
      .describe('incidence and exit medium, lossless (k = 0); default air, n = 1'),
    layers: z
      .array(
        z.strictObject({
          name: z.string().max(200).optional().describe('label of the layer'),
          material: MATERIAL_SOURCE_SCHEMA,
          thickness_nm: z.number().min(0).describe('physical thickness in nm (the start value when fitted)'),
          fit: z
            .array(z.string().min(1))
            .optional()
            .describe(
              'ellipsometry fit: the free parameters of this layer: "thickness_nm", parameters of its model source (e.g. "A", "E0", "C", "Eg", "eps_inf"), or "fraction" of its mixture; ignored by the stack command',
            ),
          bounds: z
            .record(z.string(), z.tuple([z.number(), z.number()]))
            .optional()
            .describe('ellipsometry fit: [low, high] per free parameter, e.g. {"thickness_nm": [0, 500]}; default the model catalogue\'s bounds'),
        }),
      )
      .max(1000)
      .describe('layers in the order light meets them, from the ambient side'),
    substrate: z
      .strictObject({
        material: MATERIAL_SOURCE_SCHEMA,
        thickness_mm: z.number().positive().optional().describe('substrate thickness in mm (needed when incoherent)'),
        incoherent: z
          .boolean()
          .optional()
          .describe(
            'true: a thick substrate whose back surface (into the ambient) is summed incoherently into R and T; false: semi-infinite. Default: true when thickness_mm is given',
          ),
      })
      .describe('the substrate'),
  })
  .describe('nkledger stack design: a thin-film stack between an ambient medium and a substrate');

export type MaterialSource = z.infer<typeof MATERIAL_SOURCE_SCHEMA>;
export type StackDesign = z.infer<typeof STACK_DESIGN_SCHEMA>;

/** The JSON Schema (draft 2020-12) of a design file, as committed in schemas/stack-design.schema.json. */
export function stackDesignJsonSchema(): Record<string, unknown> {
  return {
    ...z.toJSONSchema(STACK_DESIGN_SCHEMA, { io: 'input' }),
    $id: 'https://nkledger.invalid/schemas/stack-design.schema.json',
    title: 'nkledger stack design',
  };
}

/** Where the value at `path` sits in `text` (1-based line and column), if found. */
function locate(text: string, path: Array<string | number>): { line: number; column: number } | null {
  const root = parseTree(text);
  if (!root) return null;
  // The deepest existing node on the path (an unknown key's parent, a missing field's object).
  for (let depth = path.length; depth >= 0; depth--) {
    const node = findNodeAtLocation(root, path.slice(0, depth));
    if (node) return lineColumn(text, node.offset);
  }
  return null;
}

function lineColumn(text: string, offset: number): { line: number; column: number } {
  let line = 1,
    start = 0;
  for (let i = 0; i < offset && i < text.length; i++) {
    if (text.charCodeAt(i) === 10) {
      line++;
      start = i + 1;
    }
  }
  return { line, column: offset - start + 1 };
}

function valueAt(value: unknown, path: PropertyKey[]): unknown {
  let v = value;
  for (const key of path) v = v !== null && typeof v === 'object' ? (v as Record<PropertyKey, unknown>)[key] : undefined;
  return v;
}

/** The first zod issue as a message, with a union issue of a material source narrowed to the branch its keys choose. */
function describeIssue(schema: z.ZodType, value: unknown): { path: Array<string | number>; message: string } | null {
  const result = schema.safeParse(value);
  if (result.success) return null;
  const issue = result.error.issues[0];
  const path = issue.path.map((p) => (typeof p === 'number' ? p : String(p)));
  if (issue.code === 'invalid_union') {
    const here = valueAt(value, path);
    if (here !== null && typeof here === 'object' && !Array.isArray(here)) {
      const branch = SOURCE_BRANCHES.find(([key]) => key in here);
      if (branch) {
        const inner = describeIssue(branch[1], here);
        if (inner) return { path: [...path, ...inner.path], message: inner.message };
      }
    }
    return {
      path,
      message:
        'a material source is one of {"ref": "slug@N"}, {"file": "table.csv"}, {"n": 1.38, "k": 0}, {"model": "sellmeier", "parameters": {…}} or {"mix": "bruggeman", "materials": [SOURCE, SOURCE], "fraction": 0.5} or {"layer": 2}',
    };
  }
  if (issue.code === 'unrecognized_keys')
    return { path, message: `unknown field${issue.keys.length > 1 ? 's' : ''} ${issue.keys.map((k) => `"${k}"`).join(', ')}` };
  if (issue.code === 'invalid_type' && valueAt(value, issue.path) === undefined) return { path, message: 'required' };
  return { path, message: issue.message };
}

/** Dotted path as the refusal names the field, e.g. layers.2.material.n (1-based layer numbers would confuse JSON tools). */
export function fieldName(path: Array<string | number>): string {
  return path.length ? path.join('.') : '(top level)';
}

/**
 * Parse and check a design. `input` is the file text (refusals then carry line and column) or an already
 * parsed JSON value (the HTTP API's body).
 */
export function parseStackDesign(input: string | unknown, file = '<design>'): StackDesign {
  let value: unknown = input;
  const text = typeof input === 'string' ? input.replace(/^\uFEFF/, '') : null;
  if (text !== null) {
    try {
      value = JSON.parse(text);
    } catch (err) {
      const errors: ParseError[] = [];
      parseTree(text, errors, { disallowComments: true, allowTrailingComma: false });
      const where = errors.length ? lineColumn(text, errors[0].offset) : {};
      const why = errors.length
        ? printParseErrorCode(errors[0].error)
            .replace(/([a-z])([A-Z])/g, '$1 $2')
            .toLowerCase()
        : (err as Error).message; // "ValueExpected" → "value expected"
      throw new InputError('design-json', `not JSON: ${why}`, { file, ...where });
    }
  }
  const issue = describeIssue(STACK_DESIGN_SCHEMA, value);
  if (issue) {
    const where = text !== null ? locate(text, issue.path) : null;
    throw new InputError('design-format', `${fieldName(issue.path)}: ${issue.message}`, { file, ...(where ?? {}), field: fieldName(issue.path) });
  }
  const design = STACK_DESIGN_SCHEMA.parse(value);
  const sub = design.substrate;
  if (sub.incoherent === true && sub.thickness_mm === undefined) {
    const where = text !== null ? locate(text, ['substrate', 'incoherent']) : null;
    throw new InputError('design-format', 'substrate.incoherent: an incoherent substrate needs thickness_mm (its absorption depends on it)', {
      file,
      ...(where ?? {}),
      field: 'substrate.incoherent',
    });
  }
  return design;
}

/** Line and column of a field of a design file (for refusals raised after parsing, e.g. an unknown ref). */
export function locateField(text: string | null, path: Array<string | number>): { line?: number; column?: number } {
  return (text !== null && locate(text, path)) || {};
}
