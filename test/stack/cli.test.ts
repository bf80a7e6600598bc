/**
 * `nkledger stack` as a lab engineer runs it, in-process (test/cli/run-cli.ts), on the example designs of
 * data/marrowick and on a temp registry with a lockfile. Physics is checked in physics.test.ts; here the
 * bare-glass Fresnel value (Hecht ch. 4) and the SHA-256 of a file source (node:crypto) are the outside facts.
 */
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { XMLParser } from 'fast-xml-parser';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { approve, createMaterial, importVersion, openRegistry } from '../../src/service/registry.ts';
import { srgbOf } from '../../src/stack/colour.ts';
import { cauchyTable } from '../registry/helpers.ts';
import { ROOT, runCli } from '../cli/run-cli.ts';

let dir: string;
let db: string;

async function run(args: string[], input?: string) {
  // Paths relative to the project root, as under npm test.
  const r = await runCli(
    args.map((a) => (a.startsWith('data/') ? join(ROOT, a) : a)),
    { input, env: { NKLEDGER_USER: 'ada', NKLEDGER_DB: db } },
  );
  return { code: r.code, out: r.stdout, err: r.stderr };
}

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'nkledger-stack-'));
  db = join(dir, 'lab.db');
  const registry = await openRegistry(db);
  try {
    // Invented Cauchy-like numbers (test/registry/helpers.ts), not a measurement.
    await createMaterial(registry, { slug: 'oxide', name: 'Oxide film' }, 'ada');
    await importVersion(registry, { slug: 'oxide', table: cauchyTable(1.45) }, 'ada');
    await approve(registry, 'oxide@1', 'bob');
    await importVersion(registry, { slug: 'oxide', table: cauchyTable(1.47) }, 'ada');
    await approve(registry, 'oxide@2', 'bob');
  } finally {
    await registry.close();
  }
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('nkledger stack', { timeout: 120_000 }, () => {
  it('the AR example: JSON with one result per angle, fractions, colour, and the file source pinned by its SHA-256', async () => {
    const r = await run(['stack', 'data/marrowick/ar-coating.stack.json', '--at', '400:800:100', '--angle', '0,45', '--json']);
    expect(r.code, r.err).toBe(0);
    const report = JSON.parse(r.out);
    expect(report.results.map((x: { angle_deg: number }) => x.angle_deg)).toEqual([0, 45]);
    const first = report.results[0];
    for (const key of ['wavelength_nm', 'R', 'T', 'A', 'Rs', 'Rp', 'Ts', 'Tp', 'psi_deg', 'delta_deg']) expect(first[key]).toHaveLength(5);
    expect(first.R.every((v: number) => v > 0 && v < 0.1)).toBe(true);
    expect(first.colour.reflected).toHaveProperty('srgb_hex');
    const sha = createHash('sha256')
      .update(readFileSync(join(ROOT, 'data/marrowick/mgf2-evaporated.csv')))
      .digest('hex');
    expect(report.materials[1]).toMatchObject({ role: 'layer 1', source: 'file', ref: 'mgf2-evaporated.csv', sha256: sha });
    expect(report.notes.join(' ')).toMatch(/Ψ and Δ describe the coated front surface alone/);
  });

  it('text output: a table in percent and the colour lines; a design on standard input', async () => {
    const r = await run(['stack', '-', '--at', '550'], JSON.stringify({ name: 'bare', layers: [], substrate: { material: { n: 1.52 } } }));
    expect(r.code, r.err).toBe(0);
    expect(r.out).toMatch(/^550 +4\.258 +95\.742 +0\.000 +45\.000 +180\.000$/m); // ((1 − 1.52)/2.52)² = 4.258 % (Hecht ch. 4)
    expect(r.out).toMatch(/reflected +x 0\.3127 +y 0\.3290/);
  });

  it('--sweep with --plot writes the colour strip: one swatch per thickness, the JSON colours scaled to a brightest Y of 100', async () => {
    const svg = join(dir, 'film.svg');
    const r = await run(['stack', 'data/marrowick/water-film.stack.json', '--at', '550', '--sweep', '1=0:600:10', '--plot', svg, '--json']);
    expect(r.code, r.err).toBe(0);
    const rows = JSON.parse(r.out).results[0].sweep.rows;
    expect(rows).toHaveLength(61);
    expect(rows[1]).toHaveProperty('reflected.srgb_hex');
    const doc = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: '' }).parse(readFileSync(svg, 'utf8'));
    const swatches = [doc.svg.g]
      .flat()
      .find((g: { class: string }) => g.class === 'strip')
      .rect.filter((x: { class?: string }) => x.class === 'swatch');
    expect(swatches).toHaveLength(61);
    const scale = 100 / Math.max(...rows.map((row: { reflected: { Y: number } }) => row.reflected.Y));
    const expected = rows.map(
      (row: { reflected: { X: number; Y: number; Z: number } }) =>
        srgbOf(row.reflected.X * scale, row.reflected.Y * scale, row.reflected.Z * scale).hex,
    );
    expect(swatches.map((s: { fill: string }) => s.fill)).toEqual(expected);
    expect(rows[0].reflected.srgb_hex).toBe('#000000'); // no film, no reflection
  });

  it('--lock: refs resolve through the lockfile; a disagreement is refused with file:line:col and exit 2', async () => {
    const lockFile = join(dir, 'design.lock.json');
    expect((await run(['lock', 'add', 'oxide@1', '--lock', lockFile, '--db', db])).code).toBe(0);
    const design = join(dir, 'design.json');
    writeFileSync(
      design,
      '{\n  "layers": [\n    {"material": {"ref": "oxide"}, "thickness_nm": 100}\n  ],\n  "substrate": {"material": {"n": 1.52}}\n}\n',
    );
    const ok = await run(['stack', design, '--at', '550', '--lock', lockFile, '--db', db, '--json']);
    expect(ok.code, ok.err).toBe(0);
    expect(JSON.parse(ok.out).materials[1]).toMatchObject({ ref: 'oxide@1', source: 'registry', status: 'approved' });
    writeFileSync(
      design,
      '{\n  "layers": [\n    {"material": {"ref": "oxide@2"}, "thickness_nm": 100}\n  ],\n  "substrate": {"material": {"n": 1.52}}\n}\n',
    );
    const bad = await run(['stack', design, '--at', '550', '--lock', lockFile, '--db', db]);
    expect(bad.code).toBe(2);
    expect(bad.out).toBe('');
    expect(bad.err).toMatch(/design\.json:3:26: layer 1: the design names oxide@2, the lockfile .* pins oxide@1 .*\[stack-lock-disagrees\]/);
  });

  it('refusals: a table that does not cover --at, a sweep layer that does not exist, a bad flag (exit 2, no stack trace)', async () => {
    const range = await run(['stack', 'data/marrowick/ar-coating.stack.json', '--at', '200']);
    expect(range.code).toBe(2);
    expect(range.err).toMatch(
      /layer 1 \(mgf2-evaporated\.csv\) is a measured table over 250–1724\.\d+ nm; 200 nm is outside it.*\[stack-out-of-range\]/,
    );
    const layer = await run(['stack', 'data/marrowick/water-film.stack.json', '--at', '550', '--sweep', '3=0:100:10']);
    expect(layer.code).toBe(2);
    expect(layer.err).toMatch(/sweep layer 3: the design has 1 layer/);
    const angle = await run(['stack', 'data/marrowick/water-film.stack.json', '--at', '550', '--angle', '95']);
    expect(angle.code).toBe(2);
    expect(angle.err).toMatch(/--angle 95: expected/);
    expect(`${range.err}${layer.err}${angle.err}`).not.toMatch(/\n\s+at /);
  });
});
