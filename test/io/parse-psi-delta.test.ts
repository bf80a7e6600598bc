import { describe, expect, it } from 'vitest';
import { parsePsiDelta, recognizePsiDeltaColumn } from '../../src/io/parse-psi-delta.ts';
import { refusal } from './refusal.ts';

/** Invented Ψ/Δ values (not a measurement): what matters here is reading them. */
describe('Ψ/Δ import: layouts and dialects', () => {
  it('reads the long layout with a preamble, trade names, Δ in −180…180 and σ columns', () => {
    const text = [
      'Marrowick Optics ellipsometer export (INVENTED)',
      'Sample: TA-0412',
      'Wavelength (nm)\tAngle (deg)\tΨ\tΔ\tσΨ\tσΔ',
      '500\t70\t30.5\t-20\t0.02\t0.1',
      '400\t70\t31\t-10\t0.02\t0.1',
      '400\t65\t25\t170\t0.03\t0.2',
      '500\t65\t26\t-179.5\t0.03\t0.2',
    ].join('\n');
    const { data, detected, warnings } = parsePsiDelta(text, { file: 'long.txt' });
    expect(detected).toMatchObject({
      layout: 'long',
      delimiter: '\t',
      headerLine: 3,
      preamble: ['Marrowick Optics ellipsometer export (INVENTED)', 'Sample: TA-0412'],
      roles: ['x', 'angle', 'psi', 'delta', 'sigma_psi', 'sigma_delta'],
      deltaConvention: '-180-180',
      anglesDeg: [65, 70],
      points: 4,
    });
    // sorted by angle, then wavelength; Δ into [0, 360)
    expect(data.angleDeg).toEqual([65, 65, 70, 70]);
    expect(data.wavelengthNm).toEqual([400, 500, 400, 500]);
    expect(data.deltaDeg).toEqual([170, 180.5, 350, 340]);
    expect(data.sigmaPsiDeg).toEqual([0.03, 0.03, 0.02, 0.02]);
    expect(data.line).toEqual([6, 7, 5, 4]);
    expect(warnings).toEqual([]);
  });

  it('reads the wide layout, photon energy in eV, semicolons and decimal commas', () => {
    const text = ['Photon energy (eV);psi_65;delta_65;psi_70;delta_70', '2,5;20,1;100;30;120', '3;21;101;31;121'].join('\n');
    const { data, detected } = parsePsiDelta(text, { file: 'wide.csv' });
    expect(detected).toMatchObject({ layout: 'wide', xUnit: 'eV', decimalComma: true, anglesDeg: [65, 70], deltaConvention: 'either' });
    expect(data.angleDeg).toEqual([65, 65, 70, 70]);
    expect(data.wavelengthNm[0]).toBeCloseTo(1239.841984 / 3, 5);
    expect(data.psiDeg).toEqual([21, 20.1, 31, 30]);
  });

  it('recognizes the header spellings the docs list', () => {
    const cases: Array<[string, string]> = [
      ['angle_deg', 'angle'],
      ['Angle (deg)', 'angle'],
      ['AOI', 'angle'],
      ['psi_deg', 'psi'],
      ['Psi', 'psi'],
      ['Ψ', 'psi'],
      ['delta_deg', 'delta'],
      ['Δ (°)', 'delta'],
      ['sigma_psi_deg', 'sigma_psi'],
      ['sigma_delta_deg', 'sigma_delta'],
      ['psi_65', 'psi@65'],
      ['Delta 70°', 'delta@70'],
      ['sigma_psi_75', 'sigma_psi@75'],
      ['wavelength_nm', 'x'],
    ];
    for (const [name, role] of cases) expect(recognizePsiDeltaColumn(name).role, name).toBe(role);
  });

  it('takes 0…360 Δ as it is', () => {
    const { data, detected } = parsePsiDelta('wavelength_nm,angle_deg,psi_deg,delta_deg\n400,70,10,200\n500,70,11,359.9\n');
    expect(detected.deltaConvention).toBe('0-360');
    expect(data.deltaDeg).toEqual([200, 359.9]);
  });
});

describe('Ψ/Δ import: refusals name file, line, column and rule', () => {
  const HEADER = 'wavelength_nm,angle_deg,psi_deg,delta_deg,sigma_psi_deg';
  const BAD: Array<{ text: string; rule: string; line?: number; column?: number }> = [
    { text: `${HEADER}\n400,70,95,10,0.1\n500,70,30,10,0.1`, rule: 'implausible-psi', line: 2, column: 3 },
    { text: `${HEADER}\n400,70,30,10,0.1\n500,90,30,10,0.1`, rule: 'implausible-angle', line: 3, column: 2 },
    { text: `${HEADER}\n400,70,30,-10,0.1\n500,70,30,200,0.1`, rule: 'delta-range', line: 3, column: 4 },
    { text: `${HEADER}\n400,70,30,400,0.1\n500,70,30,10,0.1`, rule: 'implausible-delta', line: 2, column: 4 },
    { text: `${HEADER}\n400,70,30,10,0\n500,70,30,10,0.1`, rule: 'sigma-not-positive', line: 2, column: 5 },
    { text: `${HEADER}\n400,70,30,10,0.1\n400,70,31,10,0.1`, rule: 'duplicate-point', line: 3, column: 1 },
    { text: `${HEADER}\n0.4,70,30,10,0.1\n0.5,70,30,10,0.1`, rule: 'implausible-range', line: 2, column: 1 },
    { text: `${HEADER}\n400,70,3x,10,0.1\n500,70,30,10,0.1`, rule: 'non-numeric', line: 2, column: 3 },
    { text: `${HEADER}\n400,70,30\n500,70,30,10,0.1`, rule: 'field-count', line: 2 },
    { text: 'wavelength_nm,psi_deg,delta_deg\n400,30,10\n500,30,10', rule: 'no-value-column', line: 1 },
    { text: 'angle,psi,delta\n70,30,10\n70,30,10', rule: 'no-x-column', line: 1 },
    { text: 'wavelength_nm,angle,psi,delta,psi_65\n400,70,30,10,1\n500,70,30,10,1', rule: 'mixed-layout', line: 1 },
    { text: 'wavelength_nm,psi_65,delta_70\n400,30,10\n500,30,10', rule: 'no-value-column', line: 1 },
    { text: 'wavelength_nm,angle (rad),psi,delta\n400,1.2,30,10\n500,1.2,30,10', rule: 'unknown-unit', line: 1, column: 2 },
  ];
  for (const bad of BAD) {
    it(`${bad.rule}: ${bad.text.split('\n')[1]}`, () => {
      const err = refusal(() => parsePsiDelta(bad.text, { file: 'bad.csv' }));
      expect(err.rule).toBe(bad.rule);
      expect(err.location.file).toBe('bad.csv');
      if (bad.line !== undefined) expect(err.location.line).toBe(bad.line);
      if (bad.column !== undefined) expect(err.location.column).toBe(bad.column);
    });
  }

  it('a limit on both sides: Ψ = 90 and angle 0 accepted, just beyond refused', () => {
    expect(parsePsiDelta('wavelength_nm,angle,psi,delta\n400,0,90,0\n500,89.9,0,360\n').data.deltaDeg).toEqual([0, 0]);
    expect(refusal(() => parsePsiDelta('wavelength_nm,angle,psi,delta\n400,-0.1,45,0\n500,70,0,0\n')).rule).toBe('implausible-angle');
    expect(refusal(() => parsePsiDelta('wavelength_nm,angle,psi,delta\n400,70,90.01,0\n500,70,0,0\n')).rule).toBe('implausible-psi');
  });
});
