/**
 * The web pages in-process (hono's app.request, no sockets): status codes, escaping of user text, sign-in
 * cookie flags, the origin and CSRF checks on every form, reading rules, downloads, the two-person rule and
 * the upload preview. The real-browser scenario is test/browser (npm run test:browser).
 */
import { gunzipSync } from 'node:zlib';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { fitTable } from '../../src/fit/fit.ts';
import { ComputePool } from '../../src/service/compute-pool.ts';
import { exportVersion } from '../../src/service/export-version.ts';
import { approve } from '../../src/service/lifecycle.ts';
import { createMaterial } from '../../src/service/materials.ts';
import { createToken, revokeToken } from '../../src/service/tokens.ts';
import { importVersion, showVersion } from '../../src/service/versions.ts';
import { writeSetting } from '../../src/service/settings.ts';
import { importMeasurement } from '../../src/service/import-measurement.ts';
import { createApp } from '../../src/api/app.ts';
import { createWebPages, forwardToPages } from '../../src/web/app.tsx';
import { cauchyTable, tempRegistry, type TempRegistry } from '../registry/helpers.ts';
import { signIn, type Browser, browserFor } from './browser-session.ts';

const XSS = '<script>alert("x")</script>';
const ORIGIN = 'http://localhost';

let temp: TempRegistry;
let compute: ComputePool;
let app: ReturnType<typeof createWebPages>;
const tokens: Record<string, string> = {};

beforeAll(async () => {
  temp = await tempRegistry();
  const r = temp.registry;
  for (const [user, role] of [
    ['ada', 'editor'],
    ['ben', 'approver'],
    ['cy', 'reader'],
  ] as const) {
    tokens[user] = (await createToken(r, { user, role, createdBy: 'setup' })).token;
  }
  await createMaterial(r, { slug: 'film', name: `Film ${XSS}`, description: `made by ${XSS}`, tags: ['oxide', 'test'] }, 'ada');
  await createMaterial(r, { slug: 'other', name: 'Other coating', tags: ['nitride'] }, 'ada');
  await importVersion(r, { slug: 'film', table: cauchyTable(), provenance: { sample: XSS, notes: `"quoted" & <b>bold</b>` } }, 'ada');
  await approve(r, 'film@1', 'ben');
  await importVersion(r, { slug: 'film', table: cauchyTable(1.46) }, 'ada');
  compute = new ComputePool({ threads: 1 });
  app = createWebPages({ registry: r, compute, loopback: true });
});

afterAll(async () => {
  await compute.close();
  await temp.cleanup();
});

const get = async (path: string, b?: Browser) => {
  const res = await app.request(path, { headers: b ? { cookie: b.cookie() } : {} });
  return { res, body: await res.text() };
};

describe('reading pages', () => {
  it('answers the index, a material, a version and a comparison with 200; unknown ones with a 404 page', async () => {
    for (const path of ['/', '/?q=film', '/?tag=oxide', '/materials/film', '/materials/film/versions/1', '/compare?a=film@1&b=film@2']) {
      const { res, body } = await get(path);
      expect(res.status, path).toBe(200);
      expect(res.headers.get('content-type')).toMatch(/^text\/html/);
      expect(body.startsWith('<!doctype html>')).toBe(true);
    }
    const missing = await get('/materials/nothing-here');
    expect(missing.res.status).toBe(404);
    expect(missing.body).toContain('no material');
    expect((await get('/materials/film/versions/9')).res.status).toBe(404);
    expect((await get('/materials/film/versions/x')).res.status).toBe(404);
    expect((await get('/compare')).body).toContain('<option value="film@2">'); // suggestions for the two fields
  });

  it('plots what a version holds: a table only, or a model only', async () => {
    const tableOnly = (await get('/materials/film/versions/1')).body;
    expect(tableOnly).toContain('<h2>Measured table</h2>');
    expect(tableOnly).toMatch(/<figure class="plot"><svg role="img"/);
    await createMaterial(temp.registry, { slug: 'model-only', name: 'Model only' }, 'ada');
    await importVersion(temp.registry, { slug: 'model-only', fit: fitTable(cauchyTable(), { model: 'cauchy' }) }, 'ada');
    const modelOnly = await get('/materials/model-only/versions/1');
    expect(modelOnly.res.status).toBe(200);
    expect(modelOnly.body).toContain('the cauchy model (no table stored)');
    const csv = await (await app.request('/materials/model-only/versions/1/model.csv?step_nm=50')).text();
    expect(
      csv
        .trim()
        .split('\r\n')
        .slice(3)
        .map((l) => Number(l.split(',')[0])),
    ).toEqual([400, 450, 500, 550, 600, 650, 700, 750, 800]);
  });

  it('search and tag filter pick materials by name, slug, tags and description', async () => {
    expect((await get('/?q=coating')).body).toContain('/materials/other');
    expect((await get('/?q=coating')).body).not.toContain('/materials/film"');
    const byTag = (await get('/?tag=nitride')).body;
    expect(byTag).toContain('/materials/other');
    expect(byTag).not.toContain('href="/materials/film"');
    // Latest approved and counts by status.
    const index = (await get('/')).body;
    expect(index).toContain('film@1');
    expect(index).toContain('1 draft, 1 approved');
  });

  it('escapes user text everywhere it is shown', async () => {
    for (const path of ['/', '/materials/film', '/materials/film/versions/1', '/compare?a=film@1&b=film@2', `/?q=${encodeURIComponent(XSS)}`]) {
      const { body } = await get(path);
      expect(body, path).not.toContain('<script>alert');
      expect(body, path).not.toContain('<b>bold</b>');
    }
    expect((await get('/materials/film/versions/1')).body).toContain('&lt;script&gt;alert(');
  });

  it('sends a strict Content-Security-Policy and no-store on pages, long caching on assets', async () => {
    const { res, body } = await get('/');
    expect(res.headers.get('content-security-policy')).toContain("script-src 'self'");
    expect(res.headers.get('content-security-policy')).toContain("frame-ancestors 'none'");
    expect(res.headers.get('cache-control')).toBe('no-store');
    const css = /href="(\/assets\/[^"]+\.css)"/.exec(body)![1];
    const asset = await app.request(css);
    expect(asset.status).toBe(200);
    expect(asset.headers.get('cache-control')).toContain('immutable');
    expect(body).not.toMatch(/https?:\/\/(?!localhost)[a-z]/i); // nothing from another host
  });

  it('downloads are the bytes of `nkledger export`', async () => {
    const csv = await app.request('/materials/film/versions/1/table.csv');
    expect(csv.headers.get('content-disposition')).toContain('attachment');
    expect(await csv.text()).toBe((await exportVersion(temp.registry, 'film@1', 'csv')).text);
    expect(await (await app.request('/materials/film/versions/1/record.json')).text()).toBe(
      (await exportVersion(temp.registry, 'film@1', 'json')).text,
    );
    expect((await app.request('/materials/film/versions/1/model.csv')).status).toBe(404); // a table-only version has no model
  });

  it('refuses anonymous reading when the settings say so, but still serves the sign-in page', async () => {
    const closed = createWebPages({ registry: temp.registry, compute, loopback: false });
    const res = await closed.request('/');
    expect(res.status).toBe(401);
    expect(await res.text()).toContain('/sign-in?next=');
    expect((await closed.request('/sign-in')).status).toBe(200);
    const open = createWebPages({ registry: temp.registry, compute, loopback: false, settings: { anonymous_reads: 'on' } });
    expect((await open.request('/')).status).toBe(200);
  });
});

describe('sign-in and its cookie', () => {
  it('sets an HttpOnly, SameSite=Strict session cookie (Secure behind HTTPS) and signs out', async () => {
    const b = browserFor(app);
    const res = await signIn(b, tokens.cy);
    expect(res.status).toBe(303);
    const cookie = res.headers.getSetCookie().find((c) => c.startsWith('nkl_session='))!;
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Strict/);
    expect(cookie).toMatch(/Path=\//);
    expect(cookie).not.toMatch(/Secure/);
    expect((await get('/', b)).body).toContain('Signed in as <strong>cy</strong>');

    const secure = browserFor(app, { 'x-forwarded-proto': 'https' }, 'https://localhost');
    const tls = await signIn(secure, tokens.cy);
    expect(tls.headers.getSetCookie().find((c) => c.startsWith('nkl_session='))).toMatch(/Secure/);

    const out = await b.post('/sign-out', { csrf: b.csrf() });
    expect(out.status).toBe(303);
    const after = await get('/', b);
    expect(after.body).not.toContain('Signed in as');
  });

  it('refuses an unknown token, and ends the session when its token is revoked', async () => {
    const b = browserFor(app);
    const bad = await signIn(b, 'nkl_not-a-real-token');
    expect(bad.status).toBe(401);
    const t = await createToken(temp.registry, { user: 'dee', role: 'approver', createdBy: 'setup' });
    const d = browserFor(app);
    await signIn(d, t.token);
    expect((await get('/review', d)).res.status).toBe(200);
    await revokeToken(temp.registry, t.id, 'setup');
    expect((await get('/review', d)).res.status).toBe(401);
  });

  it('refuses a sign-in form without its one-off secret or from another origin', async () => {
    const b = browserFor(app);
    const form = new URLSearchParams({ token: tokens.cy, sign_in: 'guess' });
    const noSecret = await app.request('/sign-in', { method: 'POST', body: form, headers: { origin: ORIGIN } });
    expect(noSecret.status).toBe(403);
    const page = await b.get('/sign-in');
    const secret = /name="sign_in" value="([^"]+)"/.exec(await page.text())![1];
    const crossSite = await app.request('/sign-in', {
      method: 'POST',
      body: new URLSearchParams({ token: tokens.cy, sign_in: secret }),
      headers: { origin: 'https://elsewhere.example', cookie: b.cookie() },
    });
    expect(crossSite.status).toBe(403);
  });
});

describe('forms are refused from other sites and without the session secret', () => {
  it('approve needs the same origin and the CSRF secret; refused attempts change nothing', async () => {
    const ben = browserFor(app);
    await signIn(ben, tokens.ben);
    const path = '/materials/film/versions/2/approve';
    const tries = [
      await app.request(path, { method: 'POST', body: new URLSearchParams({ csrf: ben.csrf() }), headers: { cookie: ben.cookie() } }),
      await app.request(path, {
        method: 'POST',
        body: new URLSearchParams({ csrf: ben.csrf() }),
        headers: { cookie: ben.cookie(), origin: 'https://evil.example' },
      }),
      await app.request(path, { method: 'POST', body: new URLSearchParams({ csrf: 'wrong' }), headers: { cookie: ben.cookie(), origin: ORIGIN } }),
      await app.request(path, { method: 'POST', body: new URLSearchParams({}), headers: { cookie: ben.cookie(), origin: ORIGIN } }),
    ];
    expect(tries.map((r) => r.status)).toEqual([403, 403, 403, 403]);
    expect((await showVersion(temp.registry, 'film@2')).status).toBe('draft');
  });

  it('an editor may not approve; the two-person rule refuses approving one’s own draft', async () => {
    const ada = browserFor(app);
    await signIn(ada, tokens.ada);
    expect((await ada.post('/materials/film/versions/2/approve', { csrf: ada.csrf() })).status).toBe(403);
    expect((await get('/review', ada)).res.status).toBe(403);

    await createToken(temp.registry, { user: 'ada', role: 'approver', createdBy: 'setup' });
    const own = await createToken(temp.registry, { user: 'ada', role: 'approver', createdBy: 'setup' });
    const adaApprover = browserFor(app);
    await signIn(adaApprover, own.token);
    const review = await get('/review', adaApprover);
    expect(review.body).not.toContain('Approve film@2');
    const refused = await adaApprover.post('/materials/film/versions/2/approve', { csrf: adaApprover.csrf() });
    expect(refused.status).toBe(409);
    expect((await showVersion(temp.registry, 'film@2')).status).toBe('draft');
  });

  it('an approver sees the draft under review with its checks, and approves it', async () => {
    const ben = browserFor(app);
    await signIn(ben, tokens.ben);
    const review = await get('/review', ben);
    expect(review.body).toContain('Approve film@2');
    expect(review.body).toContain('Kramers-Kronig');
    const ok = await ben.post('/materials/film/versions/2/approve', { csrf: ben.csrf(), back: '/review' });
    expect(ok.status).toBe(303);
    expect(ok.headers.get('location')).toBe('/review');
    expect((await showVersion(temp.registry, 'film@2')).status).toBe('approved');
    // Only local paths are followed after a form.
    const retire = await ben.post('/materials/film/versions/1/retire', { csrf: ben.csrf(), reason: 'superseded by @2', back: '//evil.example/' });
    expect(retire.headers.get('location')).toBe('/materials/film/versions/1');
    expect((await ben.post('/materials/film/versions/2/retire', { csrf: ben.csrf(), reason: '' })).status).toBe(400);
  });
});

describe('review findings that need a reason', () => {
  it('a KK-inconsistent draft shows its finding and is approved only with a reason, which the audit log keeps', async () => {
    const r = temp.registry;
    const kk = { verdict: 'inconsistent', summary: 'invented for the test: n does not follow from k', tolerance: 0.005, rms_dn: 0.02, max_dn: 0.05 };
    await createMaterial(r, { slug: 'kk-bad', name: 'KK-inconsistent film' }, 'ada');
    const { ref } = await importVersion(r, { slug: 'kk-bad', table: cauchyTable(1.6), kk }, 'ada');
    const ben = browserFor(app);
    await signIn(ben, tokens.ben);
    const review = (await get('/review', ben)).body;
    expect(review).toContain('[kk-inconsistent]');
    expect(review).toContain('name="accept_warnings"');
    const path = `/materials/kk-bad/versions/${ref.split('@')[1]}/approve`;
    const refused = await ben.post(path, { csrf: ben.csrf() });
    expect(refused.status).toBeGreaterThanOrEqual(400);
    expect(await refused.text()).toContain('approval-warnings-unaccepted');
    expect((await showVersion(r, ref)).status).toBe('draft');
    const ok = await ben.post(path, { csrf: ben.csrf(), accept_warnings: 'checked against the prism-coupler value at 633 nm' });
    expect(ok.status).toBe(303);
    expect((await showVersion(r, ref)).status).toBe('approved');
    expect((await get('/materials/kk-bad')).body).toContain('checked against the prism-coupler value at 633 nm');
  });

  it('an expired token cannot sign in, and its sessions end when it expires', async () => {
    const r = temp.registry;
    const short = await createToken(r, { user: 'eve', role: 'reader', createdBy: 'setup', expires: '1h' });
    const b = browserFor(app);
    expect((await signIn(b, short.token)).status).toBe(303);
    expect((await get('/', b)).body).toContain('Signed in as <strong>eve</strong>');
    r.sqlite.prepare('UPDATE api_tokens SET expires_at = ? WHERE id = ?').run('2000-01-01T00:00:00.000Z', short.id);
    expect((await get('/', b)).body).not.toContain('Signed in as');
    const again = browserFor(app);
    const res = await signIn(again, short.token);
    expect(res.status).toBe(401);
    expect(await res.text()).toContain('auth-token-expired');
  });
});

describe('upload with a preview', () => {
  it('reads the file, shows what was read, tries a fit, then stores a draft with provenance', async () => {
    const ada = browserFor(app);
    await signIn(ada, tokens.ada);
    // Invented numbers (a Cauchy curve) under an instrument-style preamble.
    const rows = Array.from({ length: 41 }, (_, i) => 400 + 10 * i).map((nm) => `${nm},${(1.45 + 0.0036 / (nm / 1000) ** 2).toFixed(6)},0`);
    const file = ['Marrowick Optics test export (invented)', 'Sample: TA-0412', 'Operator: R. Okafor', 'Wavelength (nm),n,k', ...rows].join('\n');
    const form = new FormData();
    form.set('csrf', ada.csrf());
    form.set('material', 'other');
    form.set('table', new File([file], 'export-preamble.csv', { type: 'text/csv' }));
    const posted = await ada.post('/upload', form);
    expect(posted.status).toBe(303);
    const preview = posted.headers.get('location')!;
    const shown = await get(preview, ada);
    expect(shown.body).toContain('Sample: TA-0412'); // the preamble
    expect(shown.body).toContain('Wavelength (nm)');
    // Another session cannot see it.
    const cy = browserFor(app);
    await signIn(cy, tokens.ada);
    expect((await get(preview, cy)).res.status).toBe(404);

    const fitted = await ada.post(`${preview}/fit`, { csrf: ada.csrf(), model: 'cauchy' });
    expect(fitted.status).toBe(200);
    expect(await fitted.text()).toContain('Trial fit: cauchy');

    const stored = await ada.post(`${preview}/store`, {
      csrf: ada.csrf(),
      model: 'cauchy',
      kk: 'on',
      sample: 'MO-77 wafer 2',
      method: 'spectroscopic-ellipsometry',
    });
    expect(stored.status).toBe(303);
    expect(stored.headers.get('location')).toBe('/materials/other/versions/1');
    const v = await showVersion(temp.registry, 'other@1');
    expect(v.status).toBe('draft');
    expect(v.created_by).toBe('ada');
    expect(v.provenance.sample).toBe('MO-77 wafer 2');
    expect(v.provenance.source_file).toBe('export-preamble.csv');
    expect(v.provenance.preamble).toContain('Sample: TA-0412');
    expect(v.content.fit?.model).toBe('cauchy');
    expect((await get(preview, ada)).res.status).toBe(404); // gone once stored
  });

  it('an editor creates a material from the upload page; a bad slug is refused on the page', async () => {
    const ada = browserFor(app);
    await signIn(ada, tokens.ada);
    const made = await ada.post('/materials', { csrf: ada.csrf(), slug: 'tio2-ebeam', name: 'E-beam TiO2', tags: 'oxide, high-index' });
    expect(made.status).toBe(303);
    expect(made.headers.get('location')).toBe('/upload?material=tio2-ebeam');
    expect((await get('/materials/tio2-ebeam')).body).toContain('high-index');
    const bad = await ada.post('/materials', { csrf: ada.csrf(), slug: 'Not A Slug', name: 'x' });
    expect(bad.status).toBe(400);
    expect(await bad.text()).toContain('Not A Slug');
    const cy = browserFor(app);
    await signIn(cy, tokens.cy);
    expect((await cy.post('/materials', { csrf: cy.csrf(), slug: 'readers-cannot', name: 'x' })).status).toBe(403);
  });

  it('escapes the uploaded file name on the preview (it reaches the page text and the plot titles)', async () => {
    const ada = browserFor(app);
    await signIn(ada, tokens.ada);
    const form = new FormData();
    form.set('csrf', ada.csrf());
    form.set('material', 'other');
    const rows = Array.from({ length: 12 }, (_, i) => `${400 + 20 * i},1.5,0`);
    form.set('table', new File([['wavelength_nm,n,k', ...rows].join('\n')], '<img src=x onerror=alert(1)>.csv', { type: 'text/csv' }));
    const posted = await ada.post('/upload', form);
    expect(posted.status).toBe(303);
    const { body } = await get(posted.headers.get('location')!, ada);
    expect(body).toContain('&lt;img src=x onerror=alert(1)&gt;.csv');
    expect(body).not.toContain('<img src=x');
  });

  it('shows a file that does not read as a refusal on the form, storing nothing', async () => {
    const ada = browserFor(app);
    await signIn(ada, tokens.ada);
    const form = new FormData();
    form.set('csrf', ada.csrf());
    form.set('material', 'other');
    form.set('table', new File(['just words\nno numbers here\n'], 'words.csv', { type: 'text/csv' }));
    const res = await ada.post('/upload', form);
    expect(res.status).toBeGreaterThanOrEqual(400);
    expect(res.status).toBeLessThan(500);
    expect(await res.text()).toContain('words.csv');
  });
});

describe('page weight', () => {
  it('a version page of a 2,000-point table is under 150 KB gzip-compressed', async () => {
    const r = temp.registry;
    await createMaterial(r, { slug: 'dense', name: 'Dense table' }, 'ada');
    const lines = ['wavelength_nm,n,k'];
    for (let i = 0; i < 2000; i++) {
      const nm = 300 + i * 0.5;
      const um = nm / 1000;
      lines.push(`${nm},${(1.9 + 0.02 / um ** 2 + 1e-4 * Math.sin(i)).toFixed(6)},${(0.02 * Math.exp(-(nm - 300) / 50)).toFixed(6)}`);
    }
    await importMeasurement(
      r,
      { slug: 'dense', bytes: new TextEncoder().encode(lines.join('\n')), file: 'dense.csv', fit: { model: 'cauchy' } },
      'ada',
    );
    for (const path of ['/', '/materials/dense/versions/1']) {
      const res = await app.request(path, { headers: { 'accept-encoding': 'gzip' } });
      expect(res.headers.get('content-encoding')).toBe('gzip');
      const gz = Buffer.from(await res.arrayBuffer());
      expect(gz.length, path).toBeLessThan(150 * 1024);
      expect(gunzipSync(gz).toString()).toContain('</html>');
    }
  });
});

describe('beside the API', () => {
  it('the API answers first; other paths go to the pages; unknown /api/ paths keep the API 404', async () => {
    const api = createApp({ registry: temp.registry, compute, loopback: true });
    api.all('*', forwardToPages(app));
    const page = await api.request('/');
    expect(page.headers.get('content-type')).toMatch(/^text\/html/);
    const list = await api.request('/api/v1/materials');
    expect(list.headers.get('content-type')).toMatch(/^application\/json/);
    expect(list.headers.get('content-security-policy')).toBeNull(); // the pages' middleware stays off the API
    const missing = await api.request('/api/v1/nothing');
    expect(missing.status).toBe(404);
    expect(missing.headers.get('content-type')).toMatch(/problem\+json/);
    // A browser-style POST to the API with a bearer token is the API's business, not the pages' form guard.
    const created = await api.request('/api/v1/materials', {
      method: 'POST',
      headers: { authorization: `Bearer ${tokens.ada}`, 'content-type': 'application/json' },
      body: JSON.stringify({ slug: 'via-api', name: 'Via the API' }),
    });
    expect(created.status).toBe(201);
  });
});

describe('settings', () => {
  it('self-approval allowed: one’s own draft is listed for review', async () => {
    const r = temp.registry;
    await importVersion(r, { slug: 'film', table: cauchyTable(1.47) }, 'ben');
    const ben = browserFor(app);
    await signIn(ben, tokens.ben);
    expect((await get('/review', ben)).body).not.toContain('Approve film@3');
    await writeSetting(r, 'allow_self_approval', true, 'setup');
    expect((await get('/review', ben)).body).toContain('Approve film@3');
    await writeSetting(r, 'allow_self_approval', false, 'setup');
  });
});
