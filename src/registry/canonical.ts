/**
 * Canonical JSON and content hashing. The canonical form of a JSON value is:
 * - objects: keys sorted by UTF-16 code units (JavaScript's default sort), members whose value is
 *   `undefined` omitted, written `{"key":value,...}`;
 * - arrays: elements in order, `[a,b,...]`;
 * - strings: as JSON.stringify writes them;
 * - numbers: JavaScript's shortest round-trip form (Number.prototype.toString, as JSON.stringify
 *   writes them: 1.5, 1e-7, 10000000000000000, -0 written as 0); NaN and ±Infinity are refused;
 * - true, false, null as themselves; no whitespace anywhere.
 * This is the JSON Canonicalization Scheme of RFC 8785 for the values nkledger stores.
 * The hash is SHA-256 over the UTF-8 bytes of that text, written as 64 lowercase hex digits.
 */
import { createHash } from 'node:crypto';

export function canonicalJson(value: unknown): string {
  if (value === null) return 'null';
  switch (typeof value) {
    case 'number':
      if (!Number.isFinite(value)) throw new TypeError(`canonical JSON cannot hold the number ${value}`);
      return JSON.stringify(value);
    case 'string':
    case 'boolean':
      return JSON.stringify(value);
    case 'object': {
      if (Array.isArray(value)) {
        // The columns of a table (thousands of finite numbers) are the bulk of a version: JSON.stringify writes
        // them exactly as the element-wise path would, in one native call.
        if (allFiniteNumbers(value)) return JSON.stringify(value);
        return `[${value.map((v) => (v === undefined ? 'null' : canonicalJson(v))).join(',')}]`;
      }
      const record = value as Record<string, unknown>;
      const members = Object.keys(record)
        .filter((key) => record[key] !== undefined)
        .sort()
        .map((key) => `${JSON.stringify(key)}:${canonicalJson(record[key])}`);
      return `{${members.join(',')}}`;
    }
    default:
      throw new TypeError(`canonical JSON cannot hold a ${typeof value}`);
  }
}

function allFiniteNumbers(values: unknown[]): boolean {
  for (const v of values) if (typeof v !== 'number' || !Number.isFinite(v)) return false;
  return true;
}

/** SHA-256 of bytes or of a string's UTF-8 encoding, as 64 lowercase hex digits. */
export function sha256Hex(data: string | Uint8Array): string {
  return createHash('sha256').update(data).digest('hex');
}

/** SHA-256 of the canonical JSON of a value. */
export function canonicalSha256(value: unknown): string {
  return sha256Hex(canonicalJson(value));
}
