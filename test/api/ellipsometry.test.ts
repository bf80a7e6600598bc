/**
 * POST /api/v1/ellipsometry/fit through real HTTP: the same answer as the service (and so the CLI) on the
 * pool, multipart parts, refusals as problem documents with rule and field, nothing computed for bad input.
 * The physics is checked in test/stack/ellipsometry-fit.test.ts.
 */
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { answerOf, fitEllipsometry, prepareEllipsometry } from '../../src/service/ellipsometry.ts';
import { snapshotCounts, startHarness, type ApiHarness } from './harness.ts';

const DATA = readFileSync('test/fixtures/ellipsometry/sio2-malitson.psi-delta.txt');
const SAMPLE = {
  name: 'SiO2 on a constant substrate (API test)',
  layers: [{ material: { model: 'cauchy', parameters: { A: 1.45, B: 0.0036, C: 0 } }, thickness_nm: 100, fit: ['thickness_nm', 'A'] }],
  substrate: { material: { n: 3.9, k: 0.02 } },
};

function form(parts: { data?: Uint8Array; sample?: string; fields?: Record<string, string> }): RequestInit {
  const body = new FormData();
  if (parts.data) body.set('data', new Blob([Buffer.from(parts.data)]), 'run17.txt');
  if (parts.sample !== undefined) body.set('sample', new Blob([parts.sample], { type: 'application/json' }), 'sample.json');
  for (const [k, v] of Object.entries(parts.fields ?? {})) body.set(k, v);
  return { method: 'POST', body };
}

describe('POST /api/v1/ellipsometry/fit', () => {
  let h: ApiHarness;
  beforeAll(async () => {
    h = await startHarness({ settings: { anonymous_reads: 'off' } });
  });
  afterAll(() => h.stop());

  it('answers what the service computes, on the compute pool', async () => {
    const res = await h.request('/api/v1/ellipsometry/fit', {
      ...form({ data: DATA, sample: JSON.stringify(SAMPLE), fields: { starts: '2' } }),
      as: 'reader',
    });
    expect(res.status, await res.clone().text()).toBe(200);
    expect(res.headers.get('cache-control')).toBe('no-store');
    const body = await res.json();
    const prepared = await prepareEllipsometry({
      data: { bytes: DATA, file: 'run17.txt' },
      sample: { text: JSON.stringify(SAMPLE), file: '<sample>' },
      resolve: { registry: h.registry, allowFiles: false },
    });
    const direct = answerOf(prepared, fitEllipsometry(prepared.sample, prepared.data.data, { starts: 2, extrapolate: false }));
    expect(body).toEqual(JSON.parse(JSON.stringify(direct)));
    expect(Object.keys(body.parameters)).toEqual(['thickness_nm', 'A']);
    expect(body.data).toMatchObject({ file: 'run17.txt', angles_deg: [65, 70, 75], points: 423 });
  });

  it('answers the plot as SVG when asked', async () => {
    const res = await h.request('/api/v1/ellipsometry/fit', {
      ...form({ data: DATA, sample: JSON.stringify(SAMPLE), fields: { starts: '1' } }),
      headers: { accept: 'image/svg+xml' },
      as: 'reader',
    });
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toContain('image/svg+xml');
    expect(await res.text()).toContain('measured 70°');
  });

  const refusals: Array<[string, () => RequestInit, number, string, string | undefined]> = [
    [
      'a file source in the sample',
      () => form({ data: DATA, sample: JSON.stringify({ ...SAMPLE, substrate: { material: { file: 'si.csv' } } }) }),
      400,
      'stack-file-source',
      'substrate.material.file',
    ],
    ['no sample part', () => form({ data: DATA }), 400, 'upload-no-sample', 'sample'],
    ['no data part', () => form({ sample: JSON.stringify(SAMPLE) }), 400, 'upload-no-table', undefined],
    [
      'an unknown fit parameter',
      () => form({ data: DATA, sample: JSON.stringify({ ...SAMPLE, layers: [{ ...SAMPLE.layers[0], fit: ['E0'] }] }) }),
      400,
      'sample-fit-parameter',
      'layers.0.fit.0',
    ],
    [
      'Ψ outside 0–90°',
      () => form({ data: new TextEncoder().encode('wavelength_nm,angle,psi,delta\n500,70,95,10\n600,70,30,10\n'), sample: JSON.stringify(SAMPLE) }),
      400,
      'implausible-psi',
      undefined,
    ],
    ['a bad starts field', () => form({ data: DATA, sample: JSON.stringify(SAMPLE), fields: { starts: '0' } }), 400, 'bad-option', undefined],
    ['a raw body', () => ({ method: 'POST', headers: { 'content-type': 'text/csv' }, body: 'x' }), 415, 'upload-media-type', undefined],
  ];
  for (const [what, init, status, rule, field] of refusals) {
    it(`refuses ${what} with a problem document (${rule}) and changes nothing`, async () => {
      const before = snapshotCounts(h);
      const res = await h.request('/api/v1/ellipsometry/fit', { ...init(), as: 'reader' });
      expect(res.status, await res.clone().text()).toBe(status);
      expect(res.headers.get('content-type')).toContain('application/problem+json');
      const problem = await res.json();
      expect(problem.rule).toBe(rule);
      if (field) expect(problem.field).toBe(field);
      expect(snapshotCounts(h)).toEqual(before);
    });
  }

  it('needs a token when anonymous reads are off', async () => {
    expect((await h.request('/api/v1/ellipsometry/fit', form({ data: DATA, sample: JSON.stringify(SAMPLE) }))).status).toBe(401);
  });
});
