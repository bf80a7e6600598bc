/**
 * The demo registry (npm start): built through the real pipeline from the invented Marrowick data and
 * served over real HTTP. History as promised (recipe change, retired version, pending draft, lockfile);
 * numbers checked against the generating model of data/marrowick/truth.json: the Sellmeier formula
 * n² = A + Σ Bᵢλ²/(λ² − Cᵢ), λ in µm (published form: Malitson 1965), evaluated here by hand.
 */
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openRegistry, type Registry } from '../../src/registry/open.ts';
import { buildDemoRegistry, type DemoSummary } from '../../src/service/demo-registry.ts';
import { startServer, type RunningServer } from '../../src/api/server.ts';

const DATA = fileURLToPath(new URL('../../data/marrowick/', import.meta.url));
const truth = JSON.parse(readFileSync(join(DATA, 'truth.json'), 'utf8'));

describe('demo registry', () => {
  let dir: string;
  let registry: Registry;
  let server: RunningServer;
  let summary: DemoSummary;
  const get = async (path: string) => (await fetch(`${server.url}/api/v1${path}`)).json();

  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'nkledger-demo-'));
    registry = await openRegistry(join(dir, 'demo.db'));
    summary = await buildDemoRegistry(registry, DATA, join(dir, 'lock.json'));
    server = await startServer({ registry, host: '127.0.0.1', port: 0 });
  });
  afterAll(async () => {
    await server.close();
    await registry.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('has a recipe that changed: sinx-pecvd@1 retired with its reason, @2 approved', async () => {
    const { versions } = await get('/materials/sinx-pecvd');
    expect(versions.map((v: { status: string }) => v.status)).toEqual(['retired', 'approved']);
    expect(versions[0].retire_reason).toMatch(/recipe changed/);
    expect(versions[0].provenance.process).toMatch(/recipe A/);
    expect(versions[1].provenance.process).toMatch(/recipe B/);
    expect(versions[1].approved_by).not.toBe(versions[1].created_by);
  });

  it('has a pending draft and six materials, every version fitted and KK-checked', async () => {
    const { materials } = await get('/materials');
    expect(materials).toHaveLength(6);
    const draft = await get('/materials/a-si-h/versions/1');
    expect(draft.status).toBe('draft');
    for (const m of materials) {
      const { versions } = await get(`/materials/${m.slug}`);
      for (const v of versions) {
        expect(v.model, v.ref).toBeTruthy();
        expect(v.kk_verdict, v.ref).toMatch(/consistent|inconsistent|uninformative/);
      }
    }
  });

  it('wrote a lockfile whose verification warns about the retired pin', async () => {
    const lock = JSON.parse(readFileSync(summary.lockfile, 'utf8'));
    const res = await fetch(`${server.url}/api/v1/locks/verify`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify(lock),
    });
    const report = await res.json();
    expect(report).toMatchObject({ ok: true, warnings: 1, failures: 0 });
    expect(report.entries.find((e: { slug: string }) => e.slug === 'sinx-pecvd').outcome).toBe('retired');
  });

  it('serves thermal-oxide n near the generating Sellmeier curve (within the 1e-3 noise of the invented data)', async () => {
    const p = truth['sio2-thermal.csv'].parameters;
    const sellmeier = (nm: number) => {
      const l2 = (nm / 1000) ** 2;
      return Math.sqrt(p.A + (p.B1 * l2) / (l2 - p.C1) + (p.B2 * l2) / (l2 - p.C2) + (p.B3 * l2) / (l2 - p.C3));
    };
    const body = await get('/materials/sio2-thermal/versions/1/nk?wavelengths_nm=405,632.8,1064,1550');
    body.wavelength_nm.forEach((nm: number, i: number) => expect(Math.abs(body.n[i] - sellmeier(nm)), `${nm} nm`).toBeLessThan(1.5e-3));
  });
});
