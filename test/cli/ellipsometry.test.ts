/**
 * `nkledger ellipsometry fit` in-process: the JSON contract of the issue, the plot, --store with its provenance,
 * and refusals (exit 2 with file:line:column). The fit's physics is checked in test/stack/ellipsometry-fit.test.ts.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from './run-cli.ts';

const DATA = 'test/fixtures/ellipsometry/sio2-malitson.psi-delta.txt';
const SAMPLE = 'test/fixtures/ellipsometry/sio2-malitson.sample.json';

describe('nkledger ellipsometry fit', () => {
  let dir: string;
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'nkledger-ellipsometry-'));
  });
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  it('prints the JSON of the issue: parameters, statistics, correlations, warnings, materials', async () => {
    const plot = join(dir, 'fit.svg');
    const r = await runCli(['ellipsometry', 'fit', DATA, '--sample', SAMPLE, '--json', '--starts', '2', '--plot', plot]);
    expect(r.code, r.stderr).toBe(0);
    expect(r.stderr).not.toContain('\r'); // progress only on a terminal
    const out = JSON.parse(r.stdout);
    expect(Object.keys(out.parameters)).toEqual(['thickness_nm', 'B1']);
    expect(out.parameters.thickness_nm).toMatchObject({ unit: 'nm', at_bound: false });
    expect(out.parameters.thickness_nm.value).toBeCloseTo(102.3, 1);
    expect(Object.keys(out.statistics)).toEqual(expect.arrayContaining(['points', 'rms_psi_deg', 'rms_delta_deg', 'reduced_chi2', 'iterations']));
    expect(out.statistics.points).toBe(846);
    expect(out.correlations.parameters).toEqual(['thickness_nm', 'B1']);
    expect(out.warnings[0]).toMatchObject({ rule: 'strong-correlation', parameters: ['thickness_nm', 'B1'] });
    const substrate = out.materials.find((m: { role: string }) => m.role === 'substrate');
    expect(substrate.ref).toBe('si-like-substrate.csv');
    expect(substrate.sha256).toMatch(/^[0-9a-f]{64}$/);
    const svg = readFileSync(plot, 'utf8');
    for (const angle of [65, 70, 75]) {
      expect(svg).toContain(`data-label="measured ${angle}°"`);
      expect(svg).toContain(`data-label="model ${angle}°"`);
    }
  });

  it('--store keeps the film as a draft version with its provenance', async () => {
    const db = join(dir, 'lab.db');
    const env = { NKLEDGER_DB: db, NKLEDGER_USER: 'r.okafor' };
    expect((await runCli(['material', 'add', 'sio2-thermal-17', '--name', 'Thermal SiO2, run 17'], { env })).code).toBe(0);
    const r = await runCli(['ellipsometry', 'fit', DATA, '--sample', SAMPLE, '--starts', '1', '--store', 'sio2-thermal-17'], { env });
    expect(r.code, r.stderr).toBe(0);
    expect(r.stdout).toContain('stored the fitted film as sio2-thermal-17@1 (draft');
    const show = await runCli(['show', 'sio2-thermal-17@1', '--json'], { env });
    const v = JSON.parse(show.stdout);
    expect(v.status).toBe('draft');
    expect(v.provenance).toMatchObject({
      method: 'spectroscopic-ellipsometry',
      angles_deg: [65, 70, 75],
      source_file: 'sio2-malitson.psi-delta.txt',
      source_sha256: expect.stringMatching(/^[0-9a-f]{64}$/),
    });
    expect(v.provenance.notes).toMatch(/thickness 102\.\d{3} ± \S+ nm/);
    expect(v.provenance.notes).toContain('derived from the fitted sellmeier model');
    expect(v.content.fit.model).toBe('sellmeier');
    expect(v.content.fit.table).toMatch(/^derived/);
    expect(v.content.fit.diagnostics.map((d: { rule: string }) => d.rule)).toContain('strong-correlation'); // read by review
    expect(v.content.fit.ellipsometry.thickness_nm.value).toBeCloseTo(102.3, 1);
    expect(v.content.fit.ellipsometry.materials[0]).toMatchObject({ role: 'substrate', ref: 'si-like-substrate.csv' });
    expect(v.content.table.wavelengthNm).toHaveLength(141);
    // the stored model evaluates like any fitted version
    const ev = await runCli(['eval', 'sio2-thermal-17@1', '--at', '632.8', '--json'], { env });
    expect(ev.code, ev.stderr).toBe(0);
    expect(ev.stdout).toMatch(/1\.45/);
  });

  it('refuses bad data with file:line:column and exit 2, before any fit', async () => {
    const bad = join(dir, 'bad.txt');
    writeFileSync(bad, 'wavelength_nm,angle_deg,psi_deg,delta_deg\n500,70,30,10\n600,70,91,10\n');
    const r = await runCli(['ellipsometry', 'fit', bad, '--sample', SAMPLE]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain(`${bad}:3:3:`);
    expect(r.stderr).toContain('[implausible-psi]');
  });

  it('refuses a sample naming an unknown parameter at its line and column', async () => {
    const sample = join(dir, 'sample.json');
    writeFileSync(sample, readFileSync(SAMPLE, 'utf8').replace('"fit": ["thickness_nm", "B1"]', '"fit": ["thickness_nm", "E0"]'));
    writeFileSync(join(dir, 'si-like-substrate.csv'), readFileSync('test/fixtures/ellipsometry/si-like-substrate.csv'));
    const r = await runCli(['ellipsometry', 'fit', DATA, '--sample', sample]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/sample\.json:\d+:\d+: layer 1: "E0" is not a parameter of this layer/);
    expect(r.stderr).toContain('[sample-fit-parameter]');
  });

  it('refuses --starts 0', async () => {
    const r = await runCli(['ellipsometry', 'fit', DATA, '--sample', SAMPLE, '--starts', '0']);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('--starts');
  });
});
