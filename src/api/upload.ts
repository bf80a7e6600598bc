/**
 * Reading an uploaded n,k table: the raw body (text/csv or any delimited text), or multipart/form-data
 * with a `table` file part and text fields. The import fields come from the one table of import options
 * (IMPORT_OPTIONS, io/import-options.ts) the CLI's input flags come from, and are parsed by the same
 * importOptionsFrom, so both front doors read a table identically and each names the option its own way.
 */
import type { Context } from 'hono';
import { z } from 'zod';
import { InputError } from '../errors.ts';
import type { ImportOptions } from '../io/parse-table.ts';
import { IMPORT_OPTIONS, importOptionsFrom } from '../io/import-options.ts';
import { fieldSpelling, valuesFromFields } from '../io/option-spec.ts';
import { optionFields } from './option-fields.ts';
import { HttpProblem } from './problem.ts';
import { parseInput, readQuery } from './validate.ts';
import { problem, type Operation } from './operations.ts';

/** The name an upload gets in messages (`<upload>:12:3: ...`) when the client gave no file name. */
export const UPLOAD_FILE = '<upload>';

/** One uploaded table: its bytes and the names it goes by. */
export interface UploadedTable {
  bytes: Uint8Array;
  /** File name for messages and provenance: the multipart file name, else "<upload>". */
  file: string;
  /** The client's own file name, when multipart gave one. */
  clientFileName: string | null;
}

export interface TableUpload {
  /** The first (for single-table routes: the only) table; `tables` holds every one. */
  bytes: Uint8Array;
  tables: UploadedTable[];
  /** File name for messages and provenance: the multipart file name, else "<upload>". */
  file: string;
  /** The client's own file name, when multipart gave one. */
  clientFileName: string | null;
  importOptions: ImportOptions;
  /** Every other text field (multipart) or query parameter (raw body), for the route to validate. */
  fields: Record<string, string>;
  /** Where the fields came from, for messages: the query string of a raw body, or the multipart body. */
  fieldsIn: 'query' | 'body';
}

/** The import fields every upload takes (input_unit, columns, …), as the CLI's input flags. */
export const importFields = z.object(optionFields(IMPORT_OPTIONS));
const IMPORT_FIELD_NAMES = Object.keys(importFields.shape);

const TABLE_TYPES = ['text/csv', 'text/plain', 'text/tab-separated-values'];

/**
 * An upload route's OpenAPI request: the table as a text body with the fields as query parameters, or as
 * multipart/form-data with a `table` file part and the fields as form fields. `fields` is the route's own
 * zod object (beside the import fields every upload takes).
 */
export function uploadDescription(fields: z.ZodObject): { query: z.ZodObject; body: NonNullable<Operation['body']> } {
  const query = z.strictObject({ ...importFields.shape, ...fields.shape });
  const text = { json: { type: 'string', description: 'the table as delimited text' } };
  return {
    query,
    body: {
      required: true,
      content: {
        ...Object.fromEntries(TABLE_TYPES.map((type) => [type, text])),
        'multipart/form-data': query.extend({ table: z.string().meta({ format: 'binary', description: 'the table file' }) }),
      },
    },
  };
}

/** What every upload route can refuse besides its own refusals. */
export const UPLOAD_ERRORS = {
  400: problem('a table that cannot be read (the detail names file, line and column), a bad or unknown field, a broken multipart body'),
  413: problem('the body exceeds the max_body_bytes setting'),
  415: problem('neither a text table (text/csv, text/plain, text/tab-separated-values) nor multipart/form-data'),
};

/**
 * Read the table and the fields of an upload; refuses other media types with 415. `part` names the file part of a
 * multipart body (default "table"); `textParts` are further parts read as text whether sent as files or fields
 * (the ellipsometry fit's sample description); `multipartOnly` refuses a raw body. A multipart body may carry
 * several file parts only where the route says so (`several`), e.g. an all-or-none import of several files.
 */
export async function readTableUpload(
  c: Context,
  {
    part: partName = 'table',
    textParts = [],
    multipartOnly = false,
    several = false,
  }: { part?: string; textParts?: string[]; multipartOnly?: boolean; several?: boolean } = {},
): Promise<TableUpload> {
  const type = (c.req.header('content-type') ?? '').split(';')[0].trim().toLowerCase();
  let tables: UploadedTable[];
  let fields: Record<string, string>;
  if (type === 'multipart/form-data') {
    const form = await readForm(c);
    const parts = form.getAll(partName);
    if (parts.length === 0 || !parts.every((p) => p instanceof File))
      throw new InputError('upload-no-table', `multipart upload needs a file part named "${partName}"`, {});
    if (parts.length > 1 && !several)
      throw new InputError('upload-one-table', `this route stores one table per request, not ${parts.length} "${partName}" parts`, {});
    tables = [];
    for (const part of parts as File[]) {
      const clientFileName = part.name && part.name !== 'blob' ? part.name.replace(/^.*[\\/]/, '') : null;
      tables.push({ bytes: new Uint8Array(await part.arrayBuffer()), clientFileName, file: clientFileName ?? UPLOAD_FILE });
    }
    fields = {};
    for (const [key, value] of form.entries()) {
      if (key === partName) continue;
      if (textParts.includes(key) && value instanceof File) {
        fields[key] = new TextDecoder().decode(await value.arrayBuffer());
        continue;
      }
      if (typeof value !== 'string') throw new InputError('upload-field', `multipart field "${key}" must be text, not a file`, {});
      fields[key] = value;
    }
  } else if (!multipartOnly && TABLE_TYPES.includes(type)) {
    tables = [{ bytes: new Uint8Array(await c.req.arrayBuffer()), clientFileName: null, file: UPLOAD_FILE }];
    fields = readQuery(c.req.url);
  } else {
    throw new HttpProblem(
      415,
      'upload-media-type',
      multipartOnly
        ? `send multipart/form-data with a "${partName}" file part${textParts.map((t) => ` and a "${t}" part`).join('')}, not "${type || 'no content type'}"`
        : `send the table as text/csv (or text/plain) or as multipart/form-data with a "table" file, not "${type || 'no content type'}"`,
    );
  }
  for (const t of tables) if (t.bytes.length === 0) throw new InputError('upload-empty', 'the uploaded table is empty', { file: t.file });
  const fieldsIn = type === 'multipart/form-data' ? 'body' : 'query';
  const flags = parseInput(importFields, pick(fields, IMPORT_FIELD_NAMES), fieldsIn, 400);
  const [{ bytes, file, clientFileName }] = tables;
  const importOptions: ImportOptions = {
    ...importOptionsFrom(valuesFromFields(IMPORT_OPTIONS, flags), fieldSpelling(IMPORT_OPTIONS)),
    file,
  };
  return { bytes, tables, file, clientFileName, importOptions, fields: omit(fields, IMPORT_FIELD_NAMES), fieldsIn };
}

/** The multipart form, or a 400 when the body is not multipart as its Content-Type says (bad boundary, truncated, garbage). */
async function readForm(c: Context): Promise<FormData> {
  try {
    return await c.req.formData();
  } catch (err) {
    // Only a body the parser refused is the client's fault; anything else is ours.
    if (!(err instanceof TypeError) && !(err instanceof RangeError)) throw err;
    throw new InputError(
      'upload-multipart',
      `the multipart/form-data body cannot be read (${err.message}); check the boundary in Content-Type and the body's part delimiters`,
      { file: UPLOAD_FILE },
    );
  }
}

function pick(fields: Record<string, string>, names: string[]): Record<string, string> {
  return Object.fromEntries(Object.entries(fields).filter(([k]) => names.includes(k)));
}

function omit(fields: Record<string, string>, names: string[]): Record<string, string> {
  return Object.fromEntries(Object.entries(fields).filter(([k]) => !names.includes(k)));
}
