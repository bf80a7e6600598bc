/**
 * The wavelengths of an n,k request — `wavelengths_nm=450,650` or `from_nm`, `to_nm`, `step_nm` —
 * bounded by the max_nk_points setting before any array is built, and the choice of JSON or CSV by
 * the Accept header (RFC 9110 §12.5.1, with q-values).
 */
import { z } from 'zod';
import { InputError } from '../errors.ts';
import { parseWavelengthList } from '../io/wavelength-list.ts';
import { INTERPOLATION_METHODS } from '../optics/table-eval.ts';
import { toWavelengthNm, type SpectralUnit } from '../optics/units.ts';
import { HttpProblem } from './problem.ts';
import { decimalField, parseInput } from './validate.ts';

const interpolationField = z
  .enum(INTERPOLATION_METHODS as [string, ...string[]])
  .optional()
  .describe('for table-only versions; model-backed versions evaluate the model');

/** The query of GET …/nk (also the OpenAPI parameters). */
export const NK_QUERY = z.strictObject({
  wavelengths_nm: z.string().max(100_000).optional().meta({ example: '450,650', description: 'a list, or start:stop:step items' }),
  from_nm: decimalField('from_nm').optional(),
  to_nm: decimalField('to_nm').optional(),
  step_nm: decimalField('step_nm').optional(),
  interpolation: interpolationField,
  at: z
    .string()
    .max(100_000)
    .optional()
    .meta({ example: '1.5:4:0.5', description: 'points in `unit` (a list or start:stop:step items), instead of wavelengths_nm' }),
  unit: z
    .enum(['nm', 'um', 'eV', 'cm-1'])
    .optional()
    .describe('unit of `at`; the answer keeps wavelength_nm and adds the x column in this unit (energy_eV, wavelength_um, wavenumber_cm-1)'),
  extrapolate: z
    .enum(['true', 'false'])
    .optional()
    .describe(
      'true: a fitted model is also evaluated beyond its validity range; "extrapolated" marks each value and "warnings" says so. A table never extrapolates',
    ),
});

export interface NkRequest {
  wavelengthNm: number[];
  interpolation?: 'linear' | 'monotone-cubic';
  /** Unit of `at` and of the extra x column of the answer (wavelength_nm is always there). */
  unit?: SpectralUnit;
  extrapolate?: boolean;
}

export function parseNkQuery(query: Record<string, string>, maxPoints: number, limits: { maxListChars?: number } = {}): NkRequest {
  const q = parseInput(limits.maxListChars === Infinity ? NK_QUERY.extend({ wavelengths_nm: z.string().optional() }) : NK_QUERY, query, 'query', 400);
  const interpolation = q.interpolation as NkRequest['interpolation'];
  const unit = q.unit as SpectralUnit | undefined;
  const extrapolate = q.extrapolate === 'true';
  const range = [q.from_nm, q.to_nm, q.step_nm];
  const hasRange = range.some((v) => v !== undefined);
  const given = [q.wavelengths_nm !== undefined, hasRange, q.at !== undefined].filter(Boolean).length;
  if (given !== 1) {
    throw new InputError('nk-wavelengths', 'give one of wavelengths_nm=450,650, or from_nm, to_nm and step_nm, or at=1.5,2.5 with unit=eV');
  }
  if (q.at !== undefined) {
    if (q.at.split(',').length > maxPoints)
      throw new InputError('nk-too-many-points', `more than ${maxPoints} points asked for (setting max_nk_points)`);
    const list = parseWavelengthList(q.at, 'at');
    if (list.length > maxPoints)
      throw new InputError('nk-too-many-points', `${list.length} points asked for; at most ${maxPoints} per request (setting max_nk_points)`);
    if (list.some((v) => !(v > 0))) throw new InputError('nk-wavelengths', 'every value of at must be positive', {}, { option: 'at', value: q.at });
    return { wavelengthNm: list.map((v) => toWavelengthNm(v, unit ?? 'nm')), interpolation, unit, extrapolate };
  }
  const tooMany = (count: number) =>
    new InputError('nk-too-many-points', `${count} wavelengths asked for; at most ${maxPoints} per request (setting max_nk_points)`);
  if (q.wavelengths_nm !== undefined) {
    const items = q.wavelengths_nm.split(',').length;
    if (items > maxPoints) throw tooMany(items);
    // The CLI's --at parser, so "450,650" (and "400:800:50") mean the same at both front doors.
    const list = parseWavelengthList(q.wavelengths_nm, 'wavelengths_nm');
    if (list.length > maxPoints) throw tooMany(list.length);
    return { wavelengthNm: list, interpolation, unit, extrapolate };
  }
  const [from, to, step] = range;
  if (from === undefined || to === undefined || step === undefined) {
    throw new InputError('nk-wavelengths', 'a range needs all of from_nm, to_nm and step_nm');
  }
  if (!(from > 0) || !(to >= from) || !(step > 0)) {
    throw new InputError('nk-wavelengths', `range ${from}…${to} nm step ${step} nm: need 0 < from_nm ≤ to_nm and step_nm > 0`);
  }
  const count = Math.floor((to - from) / step + 1e-9) + 1;
  if (count > maxPoints) throw tooMany(count);
  return { wavelengthNm: parseWavelengthList(`${from}:${to}:${step}`, 'from_nm/to_nm/step_nm'), interpolation, unit, extrapolate };
}

/** The JSON body of POST …/nk. */
export const NK_BODY = z.strictObject({
  wavelengths_nm: z.union([z.array(z.number().finite().positive()).min(1), z.string().max(10_000_000)]).optional(),
  from_nm: z.number().finite().optional(),
  to_nm: z.number().finite().optional(),
  step_nm: z.number().finite().optional(),
  interpolation: interpolationField,
});

/**
 * The JSON body of `POST …/nk`: the same fields as the query, for wavelength lists too long for a URL;
 * `wavelengths_nm` may also be an array of numbers. The same max_nk_points bound.
 */
export function parseNkBody(body: unknown, maxPoints: number): NkRequest {
  const b = parseInput(NK_BODY, body, 'body');
  if (Array.isArray(b.wavelengths_nm)) {
    if (b.from_nm !== undefined || b.to_nm !== undefined || b.step_nm !== undefined) {
      throw new HttpProblem(422, 'nk-wavelengths', 'give either wavelengths_nm or from_nm, to_nm and step_nm');
    }
    if (b.wavelengths_nm.length > maxPoints) {
      throw new InputError(
        'nk-too-many-points',
        `${b.wavelengths_nm.length} wavelengths asked for; at most ${maxPoints} per request (setting max_nk_points)`,
      );
    }
    return { wavelengthNm: b.wavelengths_nm, interpolation: b.interpolation as NkRequest['interpolation'] };
  }
  const asQuery = Object.fromEntries(
    Object.entries(b)
      .filter(([, v]) => v !== undefined)
      .map(([k, v]) => [k, String(v)]),
  );
  return parseNkQuery(asQuery, maxPoints, { maxListChars: Infinity });
}

/** "json" or "csv" from an Accept header; JSON when absent or indifferent; 406 when neither is acceptable. */
export function negotiateNkFormat(accept: string | undefined): 'json' | 'csv' {
  if (!accept || accept.trim() === '') return 'json';
  const ranges = accept.split(',').map((part) => {
    const [type, ...params] = part
      .trim()
      .toLowerCase()
      .split(';')
      .map((s) => s.trim());
    const qParam = params.find((p) => p.startsWith('q='));
    return { type, q: qParam ? Number(qParam.slice(2)) : 1 };
  });
  const quality = (type: string) => {
    const [major] = type.split('/');
    const match = ranges.find((r) => r.type === type) ?? ranges.find((r) => r.type === `${major}/*`) ?? ranges.find((r) => r.type === '*/*');
    return match && Number.isFinite(match.q) ? match.q : 0;
  };
  const json = quality('application/json');
  const csv = quality('text/csv');
  if (json <= 0 && csv <= 0) {
    throw new HttpProblem(406, 'not-acceptable', `n,k is available as application/json or text/csv, not "${accept}"`);
  }
  return csv > json ? 'csv' : 'json';
}
