import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { canonicalJson, canonicalSha256 } from '../../src/registry/canonical.ts';

const fixture = JSON.parse(readFileSync(new URL('../reference/canonical-hash.json', import.meta.url), 'utf8')) as {
  cases: { name: string; value: unknown; canonical: string; sha256: string }[];
};

describe('canonical JSON and its SHA-256', () => {
  // reference library: Python json.dumps(sort_keys, no whitespace) + hashlib.sha256, scripts/make-canonical-hash-fixture.py
  it.each(fixture.cases)('matches Python json + hashlib: $name', ({ value, canonical, sha256 }) => {
    expect(canonicalJson(value)).toBe(canonical);
    expect(canonicalSha256(value)).toBe(sha256);
  });

  // ECMA-262 Number::toString (shortest round-trip digits; exponent form below 1e-6 and from 1e21),
  // which RFC 8785 (JSON Canonicalization Scheme) section 3.2.2.3 adopts for numbers.
  it('writes numbers in the shortest round-trip form of ECMA-262', () => {
    expect(canonicalJson([1e-7, 0.000001, 1e21, 1e20, 0.1 + 0.2, -0, 5e-324, 1.7976931348623157e308])).toBe(
      '[1e-7,0.000001,1e+21,100000000000000000000,0.30000000000000004,0,5e-324,1.7976931348623157e+308]',
    );
  });

  it('sorts keys by UTF-16 code units, omits undefined members and refuses non-finite numbers', () => {
    expect(canonicalJson({ b: 1, B: 2, a: undefined, é: 3, z: [undefined] })).toBe('{"B":2,"b":1,"z":[null],"é":3}');
    expect(() => canonicalJson({ n: Number.NaN })).toThrow(/NaN/);
    expect(() => canonicalJson([Infinity])).toThrow(/Infinity/);
  });

  it('is unchanged by a JSON round trip and by key order', () => {
    const value = { provenance: { z: 'a', a: [1.25, 2] }, content: { n: [1.4567891234567, 2.000000001] } };
    const reordered = { content: { n: [1.4567891234567, 2.000000001] }, provenance: { a: [1.25, 2], z: 'a' } };
    expect(canonicalJson(JSON.parse(JSON.stringify(value)))).toBe(canonicalJson(value));
    expect(canonicalSha256(reordered)).toBe(canonicalSha256(value));
  });
});
