import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  absorptionCoefficientCm1,
  fromWavelengthNm,
  HC_EV_NM,
  parseSpectralUnit,
  photonEnergyEvFromWavelengthNm,
  SPECTRAL_UNITS,
  toWavelengthNm,
  wavenumberCm1FromWavelengthNm,
} from '../../src/optics/units.ts';

// CODATA 2018 exact SI defining constants (BIPM SI Brochure, 9th ed. 2019; NIST CODATA 2018).
const H_J_S = 6.62607015e-34;
const C_M_S = 299792458;
const E_C = 1.602176634e-19;

describe('spectral units (CODATA 2018)', () => {
  it('hc/e equals h·c/e from the exact CODATA 2018 constants to 10 significant digits', () => {
    const hcEvNm = ((H_J_S * C_M_S) / E_C) * 1e9; // 1239.8419843320…
    expect(Math.abs(HC_EV_NM - hcEvNm) / hcEvNm).toBeLessThan(5e-10);
  });

  it('converts the HeNe line 632.8 nm to 1.959295 eV and 15802.78 cm⁻¹ (published constants, computed here)', () => {
    const expectedEv = (H_J_S * C_M_S) / E_C / 632.8e-9;
    expect(photonEnergyEvFromWavelengthNm(632.8)).toBeCloseTo(expectedEv, 8);
    expect(photonEnergyEvFromWavelengthNm(632.8)).toBeCloseTo(1.959295, 6);
    expect(wavenumberCm1FromWavelengthNm(632.8)).toBeCloseTo(15802.781, 3);
  });

  it('1 eV is 1239.841984 nm; 1 µm is 1000 nm; 10 Å is 1 nm; 10000 cm⁻¹ is 1000 nm (definitions, common practice)', () => {
    expect(toWavelengthNm(1, 'eV')).toBeCloseTo(1239.841984, 6);
    expect(toWavelengthNm(1, 'um')).toBe(1000);
    expect(toWavelengthNm(10, 'A')).toBe(1);
    expect(toWavelengthNm(10000, 'cm-1')).toBe(1000);
    expect(fromWavelengthNm(500, 'um')).toBe(0.5);
    expect(fromWavelengthNm(500, 'A')).toBe(5000);
  });

  it('every unit round-trips through nm (property)', () => {
    fc.assert(
      fc.property(fc.double({ min: 1, max: 1e6, noNaN: true }), fc.constantFrom(...SPECTRAL_UNITS), (nm, unit) => {
        const back = toWavelengthNm(fromWavelengthNm(nm, unit), unit);
        expect(Math.abs(back - nm) / nm).toBeLessThan(1e-14);
      }),
    );
  });

  it('α = 4πk/λ: k = 1 at 1000 nm gives 1.2566e5 cm⁻¹ (common practice)', () => {
    expect(absorptionCoefficientCm1(1, 1000)).toBeCloseTo(4 * Math.PI * 1e4, 6);
  });

  it('parses the ways people write units, and only those', () => {
    const cases: [string, string | undefined][] = [
      ['nm', 'nm'],
      ['µm', 'um'],
      ['μm', 'um'],
      ['um', 'um'],
      ['micron', 'um'],
      ['Å', 'A'],
      ['\u212B', 'A'],
      ['A', 'A'],
      ['eV', 'eV'],
      ['ev', 'eV'],
      ['cm-1', 'cm-1'],
      ['cm⁻¹', 'cm-1'],
      ['cm^-1', 'cm-1'],
      ['1/cm', 'cm-1'],
      ['cm\u22121', 'cm-1'],
      ['furlong', undefined],
      ['a', undefined],
      ['', undefined],
    ];
    for (const [text, unit] of cases) expect(parseSpectralUnit(text), text).toBe(unit);
  });
});
