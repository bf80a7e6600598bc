/**
 * Every read and write route through real HTTP on an ephemeral loopback port: status codes, bodies,
 * Location headers, caching (RFC 9110 ETag/If-None-Match → 304; RFC 9111 Cache-Control), and the
 * RFC 9457 problem documents for bad input, each shown to have written nothing.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createMaterial } from '../../src/service/materials.ts';
import { importVersion } from '../../src/service/versions.ts';
import { approve, retire } from '../../src/service/lifecycle.ts';
import { lockAdd, emptyLockfile } from '../../src/service/lock.ts';
import { csv, csvTable, json, snapshotCounts, startHarness, type ApiHarness } from './harness.ts';
import { cauchyTable } from '../registry/helpers.ts';

const IMMUTABLE = 'public, max-age=31536000, immutable';
const APPROVED = 'public, max-age=60';

describe('HTTP API routes', () => {
  let h: ApiHarness;
  beforeAll(async () => {
    h = await startHarness();
    await createMaterial(
      h.registry,
      { slug: 'sin-a', name: 'PECVD SiN recipe A', description: 'silicon-rich nitride', tags: ['nitride'] },
      'lab-editor',
    );
    await createMaterial(h.registry, { slug: 'sio2-thermal', name: 'Thermal oxide', tags: ['oxide'] }, 'lab-editor');
    await importVersion(h.registry, { slug: 'sin-a', table: cauchyTable(1.9) }, 'lab-editor'); // v1
    await approve(h.registry, 'sin-a@1', 'lab-approver');
    await importVersion(h.registry, { slug: 'sin-a', table: cauchyTable(1.91) }, 'lab-editor'); // v2
    await approve(h.registry, 'sin-a@2', 'lab-approver');
    await retire(h.registry, 'sin-a@1', 'recipe changed', 'lab-approver');
    await importVersion(h.registry, { slug: 'sin-a', table: cauchyTable(1.92) }, 'lab-editor'); // v3 draft
  });
  afterAll(() => h.stop());

  describe('materials', () => {
    it('lists materials', async () => {
      const res = await h.request('/api/v1/materials');
      expect(res.status).toBe(200);
      const body = await res.json();
      expect(body.materials.map((m: { slug: string }) => m.slug)).toEqual(['sin-a', 'sio2-thermal']);
    });

    it('searches by ?q= over slug, name, description and tags (case-insensitive, all words)', async () => {
      const slugs = async (q: string) =>
        (await (await h.request(`/api/v1/materials?q=${encodeURIComponent(q)}`)).json()).materials.map((m: { slug: string }) => m.slug);
      expect(await slugs('OXIDE')).toEqual(['sio2-thermal']);
      expect(await slugs('silicon rich')).toEqual(['sin-a']);
      expect(await slugs('nitride oxide')).toEqual([]);
    });

    it('shows one material with its versions', async () => {
      const res = await h.request('/api/v1/materials/sin-a');
      expect(res.status).toBe(200);
      const body = await res.json();
      expect(body.material.slug).toBe('sin-a');
      expect(body.versions.map((v: { ref: string; status: string }) => `${v.ref} ${v.status}`)).toEqual([
        'sin-a@1 retired',
        'sin-a@2 approved',
        'sin-a@3 draft',
      ]);
    });

    it('creates a material: 201 with Location', async () => {
      const res = await h.request('/api/v1/materials', { ...json({ slug: 'mgf2-ebeam', name: 'MgF2', tags: ['fluoride'] }), as: 'editor' });
      expect(res.status).toBe(201);
      expect(res.headers.get('location')).toBe('/api/v1/materials/mgf2-ebeam');
      expect((await res.json()).name).toBe('MgF2');
    });

    it('refuses a taken slug with 409 and unknown body fields with 422, writing nothing', async () => {
      const before = snapshotCounts(h);
      const taken = await h.request('/api/v1/materials', { ...json({ slug: 'sin-a', name: 'again' }), as: 'editor' });
      expect(taken.status).toBe(409);
      const extra = await h.request('/api/v1/materials', { ...json({ slug: 'x-y', name: 'X', colour: 'red' }), as: 'editor' });
      expect(extra.status).toBe(422);
      expect((await extra.json()).detail).toMatch(/colour/);
      expect(snapshotCounts(h)).toEqual(before);
    });
  });

  describe('versions and caching', () => {
    it('an approved version carries ETag = content hash + status, a minute of caching, and answers 304 to If-None-Match', async () => {
      const res = await h.request('/api/v1/materials/sin-a/versions/2');
      expect(res.status).toBe(200);
      const body = await res.json();
      expect(body).toMatchObject({ ref: 'sin-a@2', status: 'approved' });
      expect(body.sha256).toMatch(/^[0-9a-f]{64}$/);
      expect(body.content.table.wavelengthNm.length).toBe(9);
      expect(body.provenance).toBeTypeOf('object');
      expect(res.headers.get('etag')).toBe(`"${body.sha256}.approved"`);
      expect(res.headers.get('cache-control')).toBe(APPROVED);
      expect(res.headers.get('deprecation')).toBeNull();

      const again = await h.request('/api/v1/materials/sin-a/versions/2', { headers: { 'if-none-match': `"${body.sha256}.approved"` } });
      expect(again.status).toBe(304);
      expect(again.headers.get('etag')).toBe(`"${body.sha256}.approved"`);
      expect(await again.text()).toBe('');
      const weak = await h.request('/api/v1/materials/sin-a/versions/2', { headers: { 'if-none-match': `"nope", W/"${body.sha256}.approved"` } });
      expect(weak.status).toBe(304);
      const other = await h.request('/api/v1/materials/sin-a/versions/2', { headers: { 'if-none-match': '"0000"' } });
      expect(other.status).toBe(200);
    });

    it('an answer to a request with a token is private: RFC 9111 §3.5 would let a shared cache reuse a "public" one without the token', async () => {
      const res = await h.request('/api/v1/materials/sin-a/versions/2', { as: 'reader' });
      expect(res.status).toBe(200);
      expect(res.headers.get('cache-control')).toBe('private, max-age=60');
      const anonymous = await h.request('/api/v1/materials/sin-a/versions/2');
      expect(anonymous.headers.get('cache-control')).toBe(APPROVED);
      expect(res.headers.get('etag')).toBe(anonymous.headers.get('etag'));
    });

    it('a retired version is cacheable too, and carries a Deprecation header (RFC 9745) and a warning', async () => {
      const res = await h.request('/api/v1/materials/sin-a/versions/1');
      expect(res.status).toBe(200);
      const body = await res.json();
      expect(body.status).toBe('retired');
      expect(res.headers.get('cache-control')).toBe(IMMUTABLE);
      expect(res.headers.get('etag')).toBe(`"${body.sha256}.retired"`);
      expect(res.headers.get('deprecation')).toBe(`@${Math.floor(Date.parse(body.retired_at) / 1000)}`);
      expect(body.warnings.join(' ')).toMatch(/retired.*recipe changed/);
    });

    it('a draft is never stored by caches and has no ETag', async () => {
      const res = await h.request('/api/v1/materials/sin-a/versions/3');
      expect(res.status).toBe(200);
      expect(res.headers.get('cache-control')).toBe('no-store');
      expect(res.headers.get('etag')).toBeNull();
      const body = await res.json();
      const conditional = await h.request('/api/v1/materials/sin-a/versions/3', { headers: { 'if-none-match': `"${body.sha256}"` } });
      expect(conditional.status).toBe(200);
      // RFC 9110 §13.1.2: "*" matches any current representation, with or without an ETag.
      const any = await h.request('/api/v1/materials/sin-a/versions/3', { headers: { 'if-none-match': '*' } });
      expect(any.status).toBe(304);
      expect(any.headers.get('cache-control')).toBe('no-store');
    });
  });

  describe('problem documents (RFC 9457), nothing written', () => {
    async function expectProblem(res: Response, status: number, rule: RegExp | string) {
      expect(res.status).toBe(status);
      expect(res.headers.get('content-type')).toBe('application/problem+json');
      const p = await res.json();
      expect(p).toMatchObject({ status });
      expect(typeof p.type).toBe('string');
      expect(typeof p.title).toBe('string');
      expect(typeof p.detail).toBe('string');
      expect(p.rule).toMatch(rule);
      return p;
    }

    it('a bad slug is 400 (read and upload)', async () => {
      const before = snapshotCounts(h);
      await expectProblem(await h.request('/api/v1/materials/Not_A_Slug'), 400, 'slug-syntax');
      await expectProblem(await h.request('/api/v1/materials/Not_A_Slug/versions', { ...csv(csvTable()), as: 'editor' }), 400, 'slug-syntax');
      expect(snapshotCounts(h)).toEqual(before);
    });

    it('an unknown material and an unknown version are 404; a non-numeric version is 400', async () => {
      const before = snapshotCounts(h);
      await expectProblem(await h.request('/api/v1/materials/no-such'), 404, /unknown|not-found/);
      await expectProblem(await h.request('/api/v1/materials/sin-a/versions/99'), 404, /version/);
      await expectProblem(await h.request('/api/v1/materials/sin-a/versions/two'), 400, 'version-syntax');
      await expectProblem(await h.request('/api/v1/materials/no-such/versions', { ...csv(csvTable()), as: 'editor' }), 404, /unknown|not-found/);
      await expectProblem(await h.request('/api/v1/materials/sin-a/versions/99/approve', { method: 'POST', as: 'approver' }), 404, /version/);
      expect(snapshotCounts(h)).toEqual(before);
    });

    it('a malformed table is refused with a detail naming the line, as the CLI does', async () => {
      const before = snapshotCounts(h);
      const lines = csvTable().trimEnd().split('\n');
      lines[6] = '525,1.93,not-a-number';
      const p = await expectProblem(await h.request('/api/v1/materials/sin-a/versions', { ...csv(lines.join('\n')), as: 'editor' }), 400, /.+/);
      expect(p.line).toBe(7);
      expect(p.detail).toMatch(/^<upload>:7(:\d+)?: /);
      expect(snapshotCounts(h)).toEqual(before);
    });

    it('a malformed table sent as a multipart file is located in that file', async () => {
      const before = snapshotCounts(h);
      const form = new FormData();
      form.set('table', new Blob(['wavelength_nm,n,k\n400,1.9,0\n450,,0\n'], { type: 'text/csv' }), 'run-17.csv');
      const p = await expectProblem(await h.request('/api/v1/materials/sin-a/versions', { method: 'POST', body: form, as: 'editor' }), 400, /.+/);
      expect(p.detail).toMatch(/^run-17\.csv:3/);
      expect(snapshotCounts(h)).toEqual(before);
    });

    it('an unknown unit (header or input_unit field) is refused, writing nothing', async () => {
      const before = snapshotCounts(h);
      const header = csvTable().replace('wavelength_nm', 'wavelength (furlong)');
      const p1 = await expectProblem(await h.request('/api/v1/materials/sin-a/versions', { ...csv(header), as: 'editor' }), 400, /.+/);
      expect(p1.detail).toMatch(/furlong/);
      expect(p1.detail).toMatch(/^<upload>:1/);
      const p2 = await expectProblem(
        await h.request('/api/v1/materials/sin-a/versions?input_unit=furlong', { ...csv(csvTable()), as: 'editor' }),
        400,
        /.+/,
      );
      expect(p2.detail).toMatch(/furlong/);
      expect(snapshotCounts(h)).toEqual(before);
    });

    it('an unsupported media type is 415; an unknown field is 400; an oversized body is 413', async () => {
      const before = snapshotCounts(h);
      await expectProblem(await h.request('/api/v1/materials/sin-a/versions', { ...json({ table: [] }), as: 'editor' }), 415, 'upload-media-type');
      await expectProblem(await h.request('/api/v1/materials/sin-a/versions?colour=red', { ...csv(csvTable()), as: 'editor' }), 400, 'invalid-query');
      const small = await startHarness({ settings: { max_body_bytes: 2048 } });
      try {
        await createMaterial(small.registry, { slug: 'x', name: 'x' }, 'e');
        const big = csvTable() + '#'.repeat(4096);
        await expectProblem(await small.request('/api/v1/materials/x/versions', { ...csv(big), as: 'editor' }), 413, 'body-too-large');
        expect(small.count('material_versions')).toBe(0);
      } finally {
        await small.stop();
      }
      expect(snapshotCounts(h)).toEqual(before);
    });

    it('an unknown route is a 404 problem document', async () => {
      await expectProblem(await h.request('/api/v1/nothing-here'), 404, 'route-not-found');
    });
  });

  describe('lifecycle writes', () => {
    it('uploads CSV as a new draft: 201, Location, {ref, sha256, status}', async () => {
      const res = await h.request('/api/v1/materials/sio2-thermal/versions?sample=W-12&method=se&notes=first+run&source_file=ox-w12.csv', {
        ...csv(csvTable(1.45)),
        as: 'editor',
      });
      expect(res.status, await res.clone().text()).toBe(201);
      const body = await res.json();
      expect(body).toMatchObject({ ref: 'sio2-thermal@1', status: 'draft' });
      expect(body.sha256).toMatch(/^[0-9a-f]{64}$/);
      expect(res.headers.get('location')).toBe('/api/v1/materials/sio2-thermal/versions/1');
      const shown = await (await h.request(res.headers.get('location')!)).json();
      expect(shown.sha256).toBe(body.sha256);
      expect(shown.provenance).toMatchObject({ sample: 'W-12', method: 'spectroscopic-ellipsometry', notes: 'first run', source_file: 'ox-w12.csv' });
      expect(shown.provenance.source_sha256).toMatch(/^[0-9a-f]{64}$/);
      expect(shown.content.kk.verdict).toBeTypeOf('string');
      expect(shown.created_by).toBe('editor');
    });

    it('uploads multipart with provenance fields and a fit model', async () => {
      const form = new FormData();
      form.set('table', new Blob([csvTable(1.46)], { type: 'text/csv' }), 'thermal-oxide-run2.csv');
      form.set('fit', 'cauchy');
      form.set('substrate', 'Si(100)');
      form.set('angles_deg', '65,70,75');
      const res = await h.request('/api/v1/materials/sio2-thermal/versions', { method: 'POST', body: form, as: 'editor' });
      expect(res.status, await res.clone().text()).toBe(201);
      const { ref } = await res.json();
      const shown = await (await h.request(`/api/v1/materials/sio2-thermal/versions/${ref.split('@')[1]}`)).json();
      expect(shown.model).toBe('cauchy');
      expect(shown.content.fit.range_nm).toEqual([400, 800]);
      expect(shown.provenance).toMatchObject({ substrate: 'Si(100)', angles_deg: [65, 70, 75], source_file: 'thermal-oxide-run2.csv' });
    });

    it('approves (not by its creator), retires with a reason, withdraws a draft', async () => {
      const approved = await h.request('/api/v1/materials/sio2-thermal/versions/1/approve', { method: 'POST', as: 'approver' });
      expect(approved.status).toBe(200);
      expect(await approved.json()).toMatchObject({ status: 'approved', approved_by: 'approver' });
      const noReason = await h.request('/api/v1/materials/sio2-thermal/versions/1/retire', { ...json({}), as: 'approver' });
      expect(noReason.status).toBe(422);
      const retired = await h.request('/api/v1/materials/sio2-thermal/versions/1/retire', {
        ...json({ reason: 'furnace recalibrated' }),
        as: 'approver',
      });
      expect(await retired.json()).toMatchObject({ status: 'retired', retire_reason: 'furnace recalibrated' });
      const withdrawn = await h.request('/api/v1/materials/sio2-thermal/versions/2/withdraw', { method: 'POST', as: 'approver' });
      expect(await withdrawn.json()).toMatchObject({ status: 'withdrawn', withdrawn_by: 'approver' });
      const again = await h.request('/api/v1/materials/sio2-thermal/versions/2/withdraw', { method: 'POST', as: 'approver' });
      expect(again.status).toBe(409);
    });

    it('the two-person rule holds over HTTP: the creator cannot approve their own draft (409, nothing written)', async () => {
      const up = await h.request('/api/v1/materials/sin-a/versions', { ...csv(csvTable(1.95)), as: 'admin' });
      const { ref } = await up.json();
      const before = snapshotCounts(h);
      const res = await h.request(`/api/v1/materials/sin-a/versions/${ref.split('@')[1]}/approve`, { method: 'POST', as: 'admin' });
      expect(res.status).toBe(409);
      expect((await res.json()).rule).toBe('two-person-rule');
      expect(snapshotCounts(h)).toEqual(before);
    });

    it('concurrent uploads to one material get distinct, consecutive version numbers', async () => {
      await createMaterial(h.registry, { slug: 'busy', name: 'Busy material' }, 'lab-editor');
      const uploads = Array.from({ length: 12 }, (_, i) =>
        h.request('/api/v1/materials/busy/versions', { ...csv(csvTable(1.5 + i / 100)), as: 'editor' }),
      );
      const responses = await Promise.all(uploads);
      const bodies = await Promise.all(responses.map((r) => r.json()));
      expect(responses.map((r) => r.status)).toEqual(Array(12).fill(201));
      const numbers = bodies.map((b) => b.version).sort((a, b) => a - b);
      expect(numbers).toEqual(Array.from({ length: 12 }, (_, i) => i + 1));
      expect(new Set(bodies.map((b) => b.sha256)).size).toBe(12);
    });
  });

  describe('locks', () => {
    it('verifies a lockfile: ok pins, a retired pin as a warning, a changed hash as a failure', async () => {
      let lock = emptyLockfile();
      lock = (await lockAdd(h.registry, lock, 'sin-a@2')).lock;
      const good = await h.request('/api/v1/locks/verify', json(lock));
      expect(good.status).toBe(200);
      expect(await good.json()).toMatchObject({ ok: true, failures: 0 });

      const withRetired = { ...lock, materials: { ...lock.materials, 'sin-a': { ...lock.materials['sin-a'] } } };
      const v1 = await (await h.request('/api/v1/materials/sin-a/versions/1')).json();
      withRetired.materials['sin-a'] = { version: 1, sha256: v1.sha256 };
      const retired = await (await h.request('/api/v1/locks/verify', json(withRetired))).json();
      expect(retired).toMatchObject({ ok: true, warnings: 1 });
      const strict = await (await h.request('/api/v1/locks/verify?strict=true', json(withRetired))).json();
      expect(strict.ok).toBe(false);

      const tampered = { ...lock, materials: { 'sin-a': { version: 2, sha256: '0'.repeat(64) } } };
      const bad = await (await h.request('/api/v1/locks/verify', json(tampered))).json();
      expect(bad.ok).toBe(false);
      expect(bad.entries[0].outcome).toBe('mismatch');
    });

    it('refuses a body that is not a lockfile with a problem document', async () => {
      const res = await h.request('/api/v1/locks/verify', json({ materials: [] }));
      expect(res.status).toBe(400);
      expect(res.headers.get('content-type')).toBe('application/problem+json');
      const notJson = await h.request('/api/v1/locks/verify', { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{' });
      expect((await notJson.json()).rule).toBe('invalid-json');
    });
  });
});
