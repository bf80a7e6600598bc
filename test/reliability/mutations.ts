/**
 * The fuzz corpus and its mutations: every valid table of data/marrowick and test/fixtures/import/good
 * (instrument exports with a preamble, a units row and trade header names among them),
 * as bytes, and fast-check arbitraries that damage them the way files get damaged (cut lines, swapped
 * separators, injected bytes, huge and tiny numbers, odd encodings) or re-encode them without changing
 * what they say (BOMs, line endings, UTF-16, Windows-1252).
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { InputError } from '../../src/errors.ts';
import type { ImportResult } from '../../src/io/parse-table.ts';

const ROOT = new URL('../../', import.meta.url).pathname;
const DIRS = ['data/marrowick', 'test/fixtures/import/good'];

export interface CorpusFile {
  name: string;
  bytes: Uint8Array;
}

/** The valid tables (truth.json, the headerless fixture, which needs --columns, and the Ψ/Δ demo files left out). */
export const CORPUS: CorpusFile[] = DIRS.flatMap((dir) =>
  readdirSync(join(ROOT, dir))
    .filter((f) => !f.endsWith('.json') && f !== 'headerless.csv' && !f.includes('.psi-delta.'))
    .sort()
    .map((f) => ({ name: `${dir}/${f}`, bytes: new Uint8Array(readFileSync(join(ROOT, dir, f))) })),
);

/** Numbers that stress the parser: overflow, underflow, subnormals, signed zero, and things that are not decimal numbers. */
export const ODD_NUMBERS = [
  '1e308',
  '1.8e308',
  '1e999',
  '-1e308',
  '5e-324',
  '1e-400',
  '2.2250738585072014e-308',
  '0',
  '-0',
  '+0.0',
  '-1',
  '1e-30',
  '1e30',
  'NaN',
  'nan',
  'Infinity',
  '-inf',
  '0x1F',
  '1_000',
  '١٢٣',
  '１２３',
  '1,5',
  '1.5.5',
  '.5',
  '5.',
  '+',
  'e5',
  '9'.repeat(400),
  `0.${'0'.repeat(400)}1`,
];

const SEPARATORS = [',', ';', '\t', ' ', '|', ', ', ';;'];
const LATIN1 = new TextDecoder('windows-1252');

export type Mutation =
  | { kind: 'cut-line'; at: number }
  | { kind: 'truncate'; at: number }
  | { kind: 'duplicate-line'; at: number }
  | { kind: 'swap-lines'; a: number; b: number }
  | { kind: 'swap-separator'; from: number; to: number }
  | { kind: 'inject-bytes'; at: number; bytes: Uint8Array }
  | { kind: 'flip-byte'; at: number; value: number }
  | { kind: 'odd-number'; at: number; number: string }
  | { kind: 'quote'; at: number }
  | { kind: 'encoding'; to: 'utf-16le' | 'utf-16be' | 'utf-16le-nobom' | 'latin1-of-utf8' | 'utf8-bom' | 'double-bom' };

const frac = fc.double({ min: 0, max: 1, maxExcluded: true, noNaN: true });

export const mutationArb: fc.Arbitrary<Mutation> = fc.oneof(
  fc.record({ kind: fc.constant('cut-line' as const), at: frac }),
  fc.record({ kind: fc.constant('truncate' as const), at: frac }),
  fc.record({ kind: fc.constant('duplicate-line' as const), at: frac }),
  fc.record({ kind: fc.constant('swap-lines' as const), a: frac, b: frac }),
  fc.record({ kind: fc.constant('swap-separator' as const), from: fc.nat(SEPARATORS.length - 1), to: fc.nat(SEPARATORS.length - 1) }),
  fc.record({ kind: fc.constant('inject-bytes' as const), at: frac, bytes: fc.uint8Array({ minLength: 1, maxLength: 8 }) }),
  fc.record({ kind: fc.constant('flip-byte' as const), at: frac, value: fc.nat(255) }),
  fc.record({ kind: fc.constant('odd-number' as const), at: frac, number: fc.constantFrom(...ODD_NUMBERS) }),
  fc.record({ kind: fc.constant('quote' as const), at: frac }),
  fc.record({
    kind: fc.constant('encoding' as const),
    to: fc.constantFrom(
      'utf-16le' as const,
      'utf-16be' as const,
      'utf-16le-nobom' as const,
      'latin1-of-utf8' as const,
      'utf8-bom' as const,
      'double-bom' as const,
    ),
  }),
);

const enc = new TextEncoder();
const dec = (b: Uint8Array) => new TextDecoder('utf-8', { ignoreBOM: true }).decode(b);
const idx = (f: number, length: number) => Math.min(length - 1, Math.floor(f * length));

function utf16Of(bytes: Uint8Array): 'utf-16le' | 'utf-16be' | undefined {
  if (bytes.length >= 2 && bytes[0] === 0xff && bytes[1] === 0xfe) return 'utf-16le';
  if (bytes.length >= 2 && bytes[0] === 0xfe && bytes[1] === 0xff) return 'utf-16be';
  return undefined;
}

function utf16(text: string, bigEndian: boolean, bom: boolean): Uint8Array {
  const le = Buffer.from((bom ? '\ufeff' : '') + text, 'utf16le');
  if (bigEndian) le.swap16();
  return new Uint8Array(le);
}

function editLines(bytes: Uint8Array, edit: (lines: string[]) => string[]): Uint8Array {
  const lines = dec(bytes).split('\n');
  return enc.encode(edit(lines).join('\n'));
}

/** Apply one mutation to the bytes of a table. */
export function mutate(bytes: Uint8Array, m: Mutation): Uint8Array {
  if (bytes.length === 0) return bytes;
  switch (m.kind) {
    case 'cut-line':
      return editLines(bytes, (l) => l.filter((_, i) => i !== idx(m.at, l.length)));
    case 'truncate':
      return bytes.slice(0, idx(m.at, bytes.length));
    case 'duplicate-line':
      return editLines(bytes, (l) => {
        const i = idx(m.at, l.length);
        return [...l.slice(0, i + 1), l[i], ...l.slice(i + 1)];
      });
    case 'swap-lines':
      return editLines(bytes, (l) => {
        const [a, b] = [idx(m.a, l.length), idx(m.b, l.length)];
        const out = [...l];
        [out[a], out[b]] = [out[b], out[a]];
        return out;
      });
    case 'swap-separator':
      return enc.encode(dec(bytes).split(SEPARATORS[m.from]).join(SEPARATORS[m.to]));
    case 'inject-bytes': {
      const i = idx(m.at, bytes.length);
      return new Uint8Array([...bytes.slice(0, i), ...m.bytes, ...bytes.slice(i)]);
    }
    case 'flip-byte': {
      const out = bytes.slice();
      out[idx(m.at, out.length)] = m.value;
      return out;
    }
    case 'odd-number': {
      const text = dec(bytes);
      const numbers = [...text.matchAll(/[+-]?\d+(?:[.,]\d+)?(?:[eE][+-]?\d+)?/g)];
      if (numbers.length === 0) return bytes;
      const hit = numbers[idx(m.at, numbers.length)];
      return enc.encode(text.slice(0, hit.index) + m.number + text.slice(hit.index! + hit[0].length));
    }
    case 'quote': {
      const i = idx(m.at, bytes.length);
      return new Uint8Array([...bytes.slice(0, i), 0x22, ...bytes.slice(i)]);
    }
    case 'encoding':
      switch (m.to) {
        case 'utf-16le':
          return utf16(dec(bytes), false, true);
        case 'utf-16be':
          return utf16(dec(bytes), true, true);
        case 'utf-16le-nobom':
          return utf16(dec(bytes), false, false);
        case 'latin1-of-utf8':
          // Mojibake: the UTF-8 bytes read as Windows-1252 and written back as UTF-8 ("Âµm").
          return enc.encode(LATIN1.decode(bytes));
        case 'utf8-bom':
          return new Uint8Array([0xef, 0xbb, 0xbf, ...bytes]);
        case 'double-bom':
          return new Uint8Array([0xef, 0xbb, 0xbf, 0xef, 0xbb, 0xbf, ...bytes]);
      }
  }
}

/** Re-encodings that must not change the table read: line endings, BOMs, UTF-16, Windows-1252 where it can say it. */
export type Reencoding =
  | 'crlf'
  | 'cr'
  | 'utf8-bom'
  | 'utf-16le'
  | 'utf-16be'
  | 'windows-1252'
  | 'trailing-blank-lines'
  | 'comment-lines'
  | 'preamble';
export const reencodingArb = fc.constantFrom<Reencoding>(
  'crlf',
  'cr',
  'utf8-bom',
  'utf-16le',
  'utf-16be',
  'windows-1252',
  'trailing-blank-lines',
  'comment-lines',
  'preamble',
);

/** Metadata lines an instrument writes above the header, without `#` (INVENTED: Marrowick Optics demo lab). */
export const EXPORT_PREAMBLE = ['Marrowick Optics MO-SE 640 export', 'Sample: TA-0412', 'Operator: R. Okafor', 'Angles: 65 70 75', 'Points: 3'];

/** Unicode → Windows-1252 bytes (undefined when a character has no single-byte form). */
function toWindows1252(text: string): Uint8Array | undefined {
  const table = new Map<string, number>();
  for (let b = 0; b < 256; b++) table.set(LATIN1.decode(new Uint8Array([b])), b);
  const out: number[] = [];
  for (const ch of text) {
    const b = table.get(ch);
    if (b === undefined) return undefined;
    out.push(b);
  }
  return new Uint8Array(out);
}

export function reencode(bytes: Uint8Array, how: Reencoding): Uint8Array {
  // The source text, decoded as the importer would (UTF-8, else Windows-1252), BOM kept.
  let text: string;
  const u16 = utf16Of(bytes);
  try {
    text = new TextDecoder(u16 ?? 'utf-8', { fatal: true, ignoreBOM: true }).decode(bytes);
  } catch {
    text = LATIN1.decode(bytes);
  }
  const lines = text.replace(/^\ufeff/, '').split(/\r\n|\r|\n/);
  const bom = text.startsWith('\ufeff');
  const body = lines.join('\n');
  switch (how) {
    case 'crlf':
      return enc.encode((bom ? '\ufeff' : '') + lines.join('\r\n'));
    case 'cr':
      return enc.encode((bom ? '\ufeff' : '') + lines.join('\r'));
    case 'utf8-bom':
      return enc.encode(`\ufeff${body}`);
    case 'utf-16le':
      return utf16(body, false, true);
    case 'utf-16be':
      return utf16(body, true, true);
    case 'windows-1252':
      return toWindows1252(body) ?? enc.encode(body);
    case 'trailing-blank-lines':
      return enc.encode(`${body}\n\n  \n\t\n`);
    case 'preamble':
      return enc.encode((bom ? '\ufeff' : '') + [...EXPORT_PREAMBLE, ...lines].join('\n'));
    case 'comment-lines':
      return enc.encode(`# re-exported\n${lines.map((l, i) => (i === 1 ? `${l}\n# a comment between rows, with a , and a ; in it` : l)).join('\n')}`);
  }
}

/** Rules a refusal may carry without a line: the whole file is at fault, not one line of it. */
export const FILE_LEVEL_RULES = new Set(['binary-file', 'file-too-large', 'empty-file']);

/**
 * The contract of parseNkTable on any input: a correct table, or an InputError with a located message.
 * Returns what happened, throws (an assertion failure) otherwise.
 */
export function checkImportOutcome(
  run: () => ImportResult,
  file: string,
  lineCount: number,
  /** Refusals of the whole upload that come after parsing (e.g. the registry's duplicate-content rule). */
  unlocatedRules: ReadonlySet<string> = new Set(),
): 'accepted' | string {
  let result: ImportResult;
  try {
    result = run();
  } catch (err) {
    return checkRefusal(err, file, lineCount, unlocatedRules);
  }
  checkTable(result);
  return 'accepted';
}

/** checkImportOutcome for an asynchronous import (the service layer's). */
export async function checkImportOutcomeAsync(
  run: () => Promise<ImportResult>,
  file: string,
  lineCount: number,
  unlocatedRules: ReadonlySet<string> = new Set(),
): Promise<'accepted' | string> {
  let result: ImportResult;
  try {
    result = await run();
  } catch (err) {
    return checkRefusal(err, file, lineCount, unlocatedRules);
  }
  checkTable(result);
  return 'accepted';
}

/** A refusal must be an InputError with a rule id, a message and a location inside the file (or a rule that has none). */
function checkRefusal(err: unknown, file: string, lineCount: number, unlocatedRules: ReadonlySet<string>): string {
  if (!(err instanceof InputError)) throw new Error(`not an InputError: ${(err as Error)?.stack ?? String(err)}`);
  if (!/^[a-z0-9-]+$/.test(err.rule)) throw new Error(`bad rule id "${err.rule}"`);
  if (err.message.trim() === '') throw new Error(`empty message for ${err.rule}`);
  const { line, column } = err.location;
  if (unlocatedRules.has(err.rule)) return err.rule;
  if (err.location.file !== file) throw new Error(`${err.rule}: the message does not name the file: ${err.describe()}`);
  if (line === undefined && !FILE_LEVEL_RULES.has(err.rule)) throw new Error(`${err.rule}: no line in ${err.describe()}`);
  if (line !== undefined && !(Number.isInteger(line) && line >= 1 && line <= lineCount))
    throw new Error(`${err.rule}: line ${line} outside 1…${lineCount}`);
  if (column !== undefined && !(Number.isInteger(column) && column >= 1)) throw new Error(`${err.rule}: column ${column}`);
  if (!err.describe().startsWith(`${file}:`)) throw new Error(`unlocated message ${err.describe()}`);
  return err.rule;
}

/** An accepted table: ≥ 2 rows, equal lengths, wavelengths finite, positive and strictly ascending, n > 0, k ≥ 0, σ ≥ 0. */
export function checkTable({ table }: ImportResult): void {
  const { wavelengthNm: x, n, k } = table;
  const fail = (why: string) => {
    throw new Error(`accepted a bad table: ${why}`);
  };
  if (x.length < 2) fail('fewer than two rows');
  for (const [name, col] of Object.entries({ n, k, sigmaN: table.sigmaN, sigmaK: table.sigmaK })) {
    if (col === undefined) {
      if (name === 'n' || name === 'k') fail(`no ${name}`);
      continue;
    }
    if (col.length !== x.length) fail(`${name} has ${col.length} values for ${x.length} wavelengths`);
    if (!col.every(Number.isFinite)) fail(`${name} holds a non-finite value`);
  }
  x.forEach((w, i) => {
    if (!Number.isFinite(w) || w <= 0) fail(`wavelength ${w}`);
    if (i > 0 && !(w > x[i - 1])) fail(`wavelengths not ascending at ${i}: ${x[i - 1]}, ${w}`);
  });
  if (!n.every((v) => v > 0)) fail('n ≤ 0');
  if (!k.every((v) => v >= 0)) fail('k < 0');
  if (table.sigmaN && !table.sigmaN.every((v) => v >= 0)) fail('σn < 0');
  if (table.sigmaK && !table.sigmaK.every((v) => v >= 0)) fail('σk < 0');
}

/** Number of lines the importer sees in some bytes (an upper bound for any line it may name). */
export function lineCountOf(bytes: Uint8Array): number {
  const u16 = utf16Of(bytes);
  const text = u16 ? new TextDecoder(u16).decode(bytes) : LATIN1.decode(bytes);
  return text.split(/\r\n|\r|\n/).length;
}
