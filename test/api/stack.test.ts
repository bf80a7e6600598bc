/**
 * POST /api/v1/stack through real HTTP: the same report as the service (and so the CLI), the reader role,
 * file sources refused, the max_stack_work cap, lockfiles in the body, the SVG plot. Physics is checked in
 * test/stack; here only the bare-glass Fresnel value (Hecht, Optics, ch. 4) as a sanity check of the wiring.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { computeStack, parseStackOptions, resolveStackDesign } from '../../src/service/stack.ts';
import { parseStackDesign } from '../../src/service/stack-design.ts';
import { lockAdd, emptyLockfile } from '../../src/service/lock.ts';
import { approvedGlass, json, snapshotCounts, startHarness, type ApiHarness } from './harness.ts';

const bareGlass = { name: 'bare glass', layers: [], substrate: { material: { n: 1.52 } } };

describe('POST /api/v1/stack', () => {
  let h: ApiHarness;
  beforeAll(async () => {
    h = await startHarness({ settings: { anonymous_reads: 'off', max_stack_work: 5000 } });
    await approvedGlass(h, 'glass');
  });
  afterAll(() => h.stop());

  it('a reader gets R, T, A, Ψ, Δ and colour; bare n = 1.52 glass reflects ((1 − 1.52)/(1 + 1.52))² (Hecht ch. 4)', async () => {
    const res = await h.request('/api/v1/stack?at=450,550&angle=0,45', { ...json(bareGlass), as: 'reader' });
    expect(res.status, await res.clone().text()).toBe(200);
    expect(res.headers.get('cache-control')).toBe('no-store');
    const body = await res.json();
    expect(body.results.map((r: { angle_deg: number }) => r.angle_deg)).toEqual([0, 45]);
    expect(body.results[0].R[1]).toBeCloseTo(((1 - 1.52) / 2.52) ** 2, 14);
    expect(body.results[0].colour.reflected.srgb_hex).toMatch(/^#[0-9a-f]{6}$/);
    expect(body.materials.map((m: { role: string }) => m.role)).toEqual(['ambient', 'substrate']);
  });

  it('answers exactly what the service computes (the CLI calls the same functions)', async () => {
    const design = {
      layers: [{ material: { ref: 'glass@1' }, thickness_nm: 120 }],
      substrate: { material: { model: 'cauchy', parameters: { A: 1.5, B: 0.004, C: 0 } } },
    };
    const res = await h.request('/api/v1/stack?at=400:800:100&angle=30&polarization=p', { ...json(design), as: 'reader' });
    expect(res.status, await res.clone().text()).toBe(200);
    const direct = computeStack(
      await resolveStackDesign(parseStackDesign(design), { registry: h.registry, designFile: '<request body>', designText: null, allowFiles: false }),
      parseStackOptions({ angle: '30', polarization: 'p' }, [400, 500, 600, 700, 800]),
    );
    expect(await res.json()).toEqual(JSON.parse(JSON.stringify(direct)));
  });

  it('needs a token when anonymous reads are off (reader role)', async () => {
    expect((await h.request('/api/v1/stack?at=550', json(bareGlass))).status).toBe(401);
  });

  it('refuses {"file": …} sources: the server\'s disk is not the client\'s', async () => {
    const before = snapshotCounts(h);
    const res = await h.request('/api/v1/stack?at=550', {
      ...json({ layers: [{ material: { file: '/etc/passwd' }, thickness_nm: 10 }], substrate: { material: { n: 1.5 } } }),
      as: 'reader',
    });
    expect(res.status).toBe(400);
    const p = await res.json();
    expect(p).toMatchObject({ rule: 'stack-file-source', field: 'layers.0.material.file' });
    expect(snapshotCounts(h)).toEqual(before);
  });

  it('caps layers × wavelengths × angles × sweep steps with the max_stack_work setting', async () => {
    const res = await h.request('/api/v1/stack?at=380:780:1&angle=0,30,45,60,70,80,85', {
      ...json({
        layers: [
          { material: { n: 1.38 }, thickness_nm: 100 },
          { material: { n: 2 }, thickness_nm: 60 },
        ],
        substrate: { material: { n: 1.5 } },
      }),
      as: 'reader',
    });
    expect(res.status).toBe(400);
    const p = await res.json();
    expect(p.rule).toBe('stack-too-much-work');
    expect(p.detail).toMatch(/5614 units of work.*at most 5000.*max_stack_work/);
    const sweep = await h.request('/api/v1/stack?at=550&sweep=1=0:5000:1', {
      ...json({ layers: [{ material: { n: 1.38 }, thickness_nm: 100 }], substrate: { material: { n: 1.5 } } }),
      as: 'reader',
    });
    expect((await sweep.json()).rule).toBe('stack-too-much-work');
  });

  it('resolves registry refs through a posted lockfile and refuses a disagreement', async () => {
    const lock = (await lockAdd(h.registry, emptyLockfile(), 'glass@1')).lock;
    const design = { layers: [{ material: { ref: 'glass' }, thickness_nm: 100 }], substrate: { material: { n: 1.6 } } };
    const ok = await h.request('/api/v1/stack?at=550', { ...json({ design, lock }), as: 'reader' });
    expect(ok.status, await ok.clone().text()).toBe(200);
    expect((await ok.json()).materials[1]).toMatchObject({ ref: 'glass@1', sha256: lock.materials.glass.sha256, status: 'approved' });
    const wrong = { ...lock, materials: { glass: { ...lock.materials.glass, version: 2 } } };
    const bad = await h.request('/api/v1/stack?at=550', {
      ...json({ design: { ...design, layers: [{ material: { ref: 'glass@1' }, thickness_nm: 100 }] }, lock: wrong }),
      as: 'reader',
    });
    expect(bad.status).toBe(400);
    expect((await bad.json()).rule).toBe('stack-lock-disagrees');
  });

  it('refuses a bad design with the field at fault, and unknown query fields', async () => {
    const res = await h.request('/api/v1/stack?at=550', {
      ...json({ layers: [{ material: { n: 1.5 }, thickness_nm: -3 }], substrate: { material: { n: 1.5 } } }),
      as: 'reader',
    });
    expect(res.status).toBe(400);
    expect(await res.json()).toMatchObject({ rule: 'design-format', field: 'layers.0.thickness_nm' });
    const q = await h.request('/api/v1/stack?at=550&colour=yes', { ...json(bareGlass), as: 'reader' });
    expect((await q.json()).rule).toBe('invalid-query');
    // A field given twice is refused, as on every other route (not silently the first value).
    const twice = await h.request('/api/v1/stack?at=550&at=650', { ...json(bareGlass), as: 'reader' });
    expect(twice.status).toBe(400);
    expect((await twice.json()).rule).toBe('query-duplicate');
  });

  it('answers the plot as SVG when Accept asks for image/svg+xml', async () => {
    const res = await h.request('/api/v1/stack?at=400:800:50', {
      ...json(bareGlass),
      as: 'reader',
      headers: { 'content-type': 'application/json', accept: 'image/svg+xml' },
    });
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toMatch(/^image\/svg\+xml/);
    expect(await res.text()).toMatch(/^<\?xml[\s\S]*<svg[\s\S]*R, T, A \(%\)/);
  });
});
