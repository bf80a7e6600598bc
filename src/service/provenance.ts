/**
 * Checking provenance given by a person (`--meta key=value`, API form fields) and turning it into the
 * stored, normalized Provenance (every field present, null when unknown).
 */
import { InputError, optionRef } from '../errors.ts';
import { MEASUREMENT_METHODS, type MeasurementMethod } from '../registry/schema.ts';
import { FILE_PROVENANCE_FIELDS, PROVENANCE_FIELDS, type Provenance } from '../registry/types.ts';

export type ProvenanceInput = Partial<Record<keyof Provenance, unknown>>;

const MAX_FIELD_CHARS = 500;
const MAX_NOTES_CHARS = 20_000;

/** Friendly spellings accepted for `method`. */
const METHOD_ALIASES: Record<string, MeasurementMethod> = {
  se: 'spectroscopic-ellipsometry',
  ellipsometry: 'spectroscopic-ellipsometry',
  'spectroscopic ellipsometry': 'spectroscopic-ellipsometry',
  'spectroscopic-ellipsometry': 'spectroscopic-ellipsometry',
  spectrophotometry: 'spectrophotometry',
  rt: 'spectrophotometry',
  'prism coupling': 'prism-coupling',
  'prism-coupling': 'prism-coupling',
  other: 'other',
};

function fail(field: string, message: string): never {
  throw new InputError('provenance-invalid', `provenance field "${field}": ${message}`);
}

/** C0/C1 control characters; notes may keep tabs and line breaks. */
const CONTROL = /[\u0000-\u001f\u007f-\u009f]/;
const CONTROL_IN_NOTES = /[\u0000-\u0008\u000b\u000c\u000e-\u001f\u007f-\u009f]/;

function text(field: string, value: unknown, max = MAX_FIELD_CHARS): string | null {
  if (value === undefined || value === null) return null;
  if (typeof value !== 'string') fail(field, 'must be text');
  // A stored record is read by people and other programs: no NUL or other control bytes, and no
  // U+FFFD, which stands for bytes that were not UTF-8 (e.g. %ff in a query string).
  const control = (field === 'notes' ? CONTROL_IN_NOTES : CONTROL).exec(value);
  if (control) fail(field, `contains the control character U+${control[0].charCodeAt(0).toString(16).toUpperCase().padStart(4, '0')}`);
  if (value.includes('\uFFFD')) fail(field, 'contains U+FFFD: bytes that are not UTF-8 text (e.g. %ff in a URL)');
  const trimmed = value.trim();
  if (trimmed === '') return null;
  if (trimmed.length > max) fail(field, `longer than ${max} characters`);
  return trimmed;
}

function method(value: unknown): MeasurementMethod | null {
  const given = text('method', value);
  if (given === null) return null;
  const known = METHOD_ALIASES[given.toLowerCase()];
  if (!known) fail('method', `"${given}" is not one of ${MEASUREMENT_METHODS.join(', ')}`);
  return known;
}

function angles(value: unknown): number[] | null {
  if (value === undefined || value === null || value === '') return null;
  const list = typeof value === 'string' ? value.split(',').map((s) => s.trim()) : value;
  if (!Array.isArray(list) || list.length === 0) fail('angles_deg', 'give angles of incidence in degrees, e.g. 65,70,75');
  return list.map((a) => {
    const deg = typeof a === 'number' ? a : Number(a);
    if (!Number.isFinite(deg) || deg < 0 || deg >= 90 || (typeof a === 'string' && a === '')) {
      fail('angles_deg', `"${a}" is not an angle of incidence in degrees (0 ≤ angle < 90)`);
    }
    return deg;
  });
}

function isoDate(value: unknown): string | null {
  const given = text('measured_on', value);
  if (given === null) return null;
  const m = /^(\d{4})-(\d{2})-(\d{2})$/.exec(given);
  const date = m ? new Date(`${given}T00:00:00Z`) : null;
  if (!m || !date || Number.isNaN(date.getTime()) || date.toISOString().slice(0, 10) !== given) {
    fail('measured_on', `"${given}" is not a date written YYYY-MM-DD`);
  }
  return given;
}

function sha256(value: unknown): string | null {
  const given = text('source_sha256', value);
  if (given === null) return null;
  if (!/^[0-9a-fA-F]{64}$/.test(given)) fail('source_sha256', 'must be 64 hex digits');
  return given.toLowerCase();
}

/** At most this many preamble lines are kept (an export's header block is a few dozen lines at most). */
const MAX_PREAMBLE_LINES = 200;
const ABSENT_COLUMNS = ['k'];

/** A list of text lines (the file's preamble, its absent columns), or undefined when empty or not given. */
function lineList(field: string, value: unknown, allowed?: string[]): string[] | undefined {
  if (value === undefined || value === null) return undefined;
  if (!Array.isArray(value) || !value.every((v) => typeof v === 'string')) fail(field, 'must be a list of text lines');
  const lines = (value as string[]).map((v) => v.trim()).filter((v) => v !== '');
  if (lines.length > MAX_PREAMBLE_LINES) fail(field, `more than ${MAX_PREAMBLE_LINES} lines`);
  if (lines.join('\n').length > MAX_NOTES_CHARS) fail(field, `longer than ${MAX_NOTES_CHARS} characters`);
  const unknown = allowed && lines.find((l) => !allowed.includes(l));
  if (unknown) fail(field, `"${unknown}" is not one of ${allowed!.join(', ')}`);
  return lines.length ? lines : undefined;
}

/** Check and normalize provenance; unknown fields are refused with the list of known ones. */
export function normalizeProvenance(input: ProvenanceInput = {}): Provenance {
  for (const key of Object.keys(input)) {
    if (![...PROVENANCE_FIELDS, ...FILE_PROVENANCE_FIELDS].includes(key as never)) {
      throw new InputError('provenance-unknown-field', `unknown provenance field "${key}": known fields are ${PROVENANCE_FIELDS.join(', ')}`);
    }
  }
  const sourceFile = text('source_file', input.source_file);
  const preamble = lineList('preamble', input.preamble);
  const absent = lineList('absent_columns', input.absent_columns, ABSENT_COLUMNS);
  return {
    sample: text('sample', input.sample),
    substrate: text('substrate', input.substrate),
    process: text('process', input.process),
    instrument: text('instrument', input.instrument),
    method: method(input.method),
    angles_deg: angles(input.angles_deg),
    measured_on: isoDate(input.measured_on),
    operator: text('operator', input.operator),
    source_file: sourceFile === null ? null : sourceFile.split(/[\\/]/).pop()!,
    source_sha256: sha256(input.source_sha256),
    notes: text('notes', input.notes, MAX_NOTES_CHARS),
    // Omitted (not null) when absent: the hashed document of a version without them is unchanged.
    ...(preamble && { preamble }),
    ...(absent && { absent_columns: absent }),
  };
}

/** Short names accepted in `--meta key=value` besides the field names themselves. */
const META_ALIASES: Record<string, keyof Provenance> = {
  recipe: 'process',
  angles: 'angles_deg',
  aoi: 'angles_deg',
  date: 'measured_on',
  measured: 'measured_on',
  note: 'notes',
};

/** Parse `key=value` pairs (the command line's repeated `meta` option) into provenance input. */
export function parseMetaPairs(pairs: string[]): ProvenanceInput {
  const out: ProvenanceInput = {};
  for (const pair of pairs) {
    const eqAt = pair.indexOf('=');
    if (eqAt <= 0)
      throw new InputError('meta-syntax', `${optionRef('meta')} "${pair}": write key=value, e.g. ${optionRef('meta')} instrument="MO-SE 640"`);
    const rawKey = pair.slice(0, eqAt).trim().toLowerCase().replace(/-/g, '_');
    const key = META_ALIASES[rawKey] ?? rawKey;
    if (!(PROVENANCE_FIELDS as readonly string[]).includes(key)) {
      throw new InputError(
        'provenance-unknown-field',
        `${optionRef('meta')} "${pair}": unknown field "${rawKey}": known fields are ${PROVENANCE_FIELDS.join(', ')} (also ${Object.keys(META_ALIASES).join(', ')})`,
      );
    }
    if (key in out) throw new InputError('meta-repeated', `${optionRef('meta')} gives "${key}" twice`);
    out[key as keyof Provenance] = pair.slice(eqAt + 1);
  }
  return out;
}
