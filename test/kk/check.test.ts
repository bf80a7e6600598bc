/**
 * The behaviour issue 4 asks of the check, on synthetic tables from scripts/gen-kk-cases.py
 * (seeded; ε1 of the Lorentz cases in closed form, of the Tauc-Lorentz cases by scipy 1.17.1 quadrature).
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { checkKramersKronig } from '../../src/kk/check.ts';
import { InputError } from '../../src/errors.ts';
import type { NkTable } from '../../src/table.ts';

function fixture(name: string): NkTable & { parameters: Record<string, number> } {
  const doc = JSON.parse(readFileSync(new URL(`../fixtures/kk/${name}.json`, import.meta.url), 'utf8'));
  return { wavelengthNm: doc.wavelength_nm, n: doc.n, k: doc.k, parameters: doc.parameters };
}

describe('checkKramersKronig on synthetic cases', () => {
  it('two Lorentz oscillators (exact pair, textbook) sampled 300–1200 nm: consistent, |Δn| ≤ 0.002 away from the edges', () => {
    const report = checkKramersKronig(fixture('lorentz-pair'));
    expect(report.verdict).toBe('consistent');
    const { wavelength_nm: wl, dn } = report.reconstructed;
    const interior = dn.filter((_, i) => wl[i] >= 320 && wl[i] <= 1150);
    expect(Math.max(...interior.map(Math.abs))).toBeLessThanOrEqual(0.002);
    expect(report.max_dn).toBeLessThanOrEqual(0.002);
  });

  it('the same with a +0.01 Gaussian bump in n (σ = 15 nm): inconsistent, worst point within 20 nm of the bump', () => {
    const table = fixture('lorentz-bump');
    const report = checkKramersKronig(table);
    expect(report.verdict).toBe('inconsistent');
    expect(Math.abs(report.worst_nm - table.parameters.bump_center_nm)).toBeLessThanOrEqual(20);
    expect(Math.abs(report.systematic_worst_nm - table.parameters.bump_center_nm)).toBeLessThanOrEqual(20);
    expect(report.summary).toMatch(/not what k implies/);
  });

  it('a Tauc-Lorentz film 1.5–5.5 eV with ε2 still large at the top edge: consistent', () => {
    const table = fixture('tauc-lorentz');
    const top = table.wavelengthNm.indexOf(Math.min(...table.wavelengthNm));
    expect(2 * table.n[top] * table.k[top]).toBeGreaterThan(5); // the premise: strong absorption at 5.5 eV
    const report = checkKramersKronig(table);
    expect(report.verdict).toBe('consistent');
    expect(report.max_dn).toBeLessThan(0.002);
  });

  it('the same Tauc-Lorentz film with 0.2% noise: consistent, and the noise is measured', () => {
    const report = checkKramersKronig(fixture('tauc-lorentz-noisy'));
    expect(report.verdict).toBe('consistent');
    // n ≈ 2.3–4.5 with 0.2% relative noise: point-to-point σ of n between 0.005 and 0.009
    expect(report.noise_dn).toBeGreaterThan(0.003);
    expect(report.noise_dn).toBeLessThan(0.012);
  });

  it('k = 0 everywhere: uninformative, and the report says why', () => {
    const report = checkKramersKronig(fixture('transparent'));
    expect(report.verdict).toBe('uninformative');
    expect(report.summary).toMatch(/cannot confirm or refute/);
    expect(report.max_dn).toBeLessThan(0.001);
  });

  it('k = 0 with n falling as photon energy rises (anomalous dispersion without absorption): inconsistent', () => {
    const table = fixture('transparent');
    const falling = { ...table, n: table.wavelengthNm.map((wl) => 1.6 - 0.01 / (wl / 1000) ** 2) };
    const report = checkKramersKronig(falling);
    expect(report.verdict).toBe('inconsistent');
    expect(report.notes.join(' ')).toMatch(/normal dispersion/);
  });

  it('a Cauchy n with a strong Urbach k: inconsistent', () => {
    const report = checkKramersKronig(fixture('cauchy-urbach'));
    expect(report.verdict).toBe('inconsistent');
    expect(report.systematic_max_dn).toBeGreaterThan(0.02);
  });
});

describe('the report', () => {
  const table = fixture('lorentz-pair');
  const report = checkKramersKronig(table);

  it('is plain JSON with the fields the CLI prints', () => {
    const copy = JSON.parse(JSON.stringify(report));
    expect(copy).toEqual(report);
    for (const key of ['verdict', 'rms_dn', 'max_dn', 'worst_nm', 'tolerance']) expect(copy).toHaveProperty(key);
    expect(report.tolerance).toBe(0.005);
  });

  it('carries the reconstruction on the table grid and Δn = n_measured − n_reconstructed', () => {
    const r = report.reconstructed;
    expect(r.wavelength_nm).toEqual(table.wavelengthNm);
    r.dn.forEach((d, i) => expect(d).toBeCloseTo(table.n[i] - r.n[i], 14));
    expect(report.rms_dn).toBeLessThanOrEqual(report.max_dn);
  });

  it('breaks the misfit down by UV / visible / NIR band and covers every point once', () => {
    expect(report.bands.map((b) => b.band)).toEqual(['UV', 'visible', 'NIR']);
    expect(report.bands.reduce((s, b) => s + b.points, 0)).toBe(table.wavelengthNm.length);
    expect(Math.max(...report.bands.map((b) => b.max_dn))).toBeCloseTo(report.max_dn, 14);
  });

  it('honours a user tolerance: a strict one turns the bump case from consistent to inconsistent and back', () => {
    const bump = fixture('lorentz-bump');
    expect(checkKramersKronig(bump, { tolerance: 0.02 }).verdict).toBe('consistent');
    expect(checkKramersKronig(bump, { tolerance: 0.002 }).verdict).toBe('inconsistent');
  });

  it('refuses unusable input with an InputError naming the rule', () => {
    expect(() => checkKramersKronig({ wavelengthNm: [500, 600], n: [1.5, 1.5], k: [0, 0] })).toThrow(InputError);
    const negative = { ...table, k: table.k.map((k, i) => (i === 10 ? -0.1 : k)) };
    expect(() => checkKramersKronig(negative)).toThrow(/k = -0.1 < 0/);
    expect(() => checkKramersKronig(table, { tolerance: -1 })).toThrow(InputError);
  });
});
