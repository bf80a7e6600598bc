/**
 * The OpenAPI document says what the server does: every registered route is described and every described
 * operation is registered, and live answers of the running server — success and refusal alike — have a
 * status the document lists for that operation, a media type it lists for that status, and a body valid
 * against its schema (JSON Schema 2020-12, the dialect of OpenAPI 3.1, checked with ajv). Common practice:
 * a description that drifts from the server is worse than none.
 */
import { Ajv2020, type ValidateFunction } from 'ajv/dist/2020.js';
import addFormatsModule from 'ajv-formats';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../src/api/app.ts';
import { documentedOperations } from '../../src/api/openapi.ts';
import { emptyLockfile, lockAdd } from '../../src/service/lock.ts';
import { createToken } from '../../src/service/tokens.ts';
import { resetSetting, writeSetting } from '../../src/service/settings.ts';
import { SLUG_PATTERN } from '../../src/registry/refs.ts';
import { createMaterial } from '../../src/service/materials.ts';
import { importVersion } from '../../src/service/versions.ts';
import type { StoredKkReport } from '../../src/registry/types.ts';
import { cauchyTable } from '../registry/helpers.ts';
import { approvedGlass, csv, csvTable, json, startHarness, type ApiHarness } from './harness.ts';

// ajv-formats is CommonJS with a default export; under ESM interop the function may sit one level down.
const addFormats = ((addFormatsModule as unknown as { default?: unknown }).default ?? addFormatsModule) as (ajv: Ajv2020) => void;

/** "METHOD /path/{param}" for every handler route of the app (middleware entries are method ALL). */
function registeredOperations(app: ReturnType<typeof createApp>): string[] {
  const ops = new Set<string>();
  for (const route of app.routes) {
    if (route.method === 'ALL') continue;
    ops.add(`${route.method} ${route.path.replace(/:([A-Za-z_]+)/g, '{$1}')}`);
  }
  return [...ops].sort();
}

interface OpenApiDoc {
  openapi: string;
  paths: Record<
    string,
    Record<string, { parameters?: { name: string; in: string }[]; responses: Record<string, { content?: Record<string, { schema: object }> }> }>
  >;
  components: { schemas: Record<string, object> };
}

/** Checks live answers against the document as the server serves it, and remembers which operations were answered. */
class AnswerChecker {
  readonly answered = new Set<string>();
  private readonly ajv = new Ajv2020({ strict: false, allErrors: true });
  private readonly validators = new Map<string, ValidateFunction>();

  constructor(private readonly doc: OpenApiDoc) {
    addFormats(this.ajv);
    this.ajv.addFormat('binary', true); // OpenAPI's marker for file content, not a JSON Schema format
    // Schemas refer to '#/components/schemas/X' of the document: register the components under an id.
    const components = JSON.parse(JSON.stringify(doc.components).replaceAll('"#/components/', '"openapi#/components/'));
    this.ajv.addSchema({ $id: 'openapi', components });
  }

  private validator(key: string, schema: object): ValidateFunction {
    let v = this.validators.get(key);
    if (!v) {
      v = this.ajv.compile(JSON.parse(JSON.stringify(schema).replaceAll('"#/components/', '"openapi#/components/')));
      this.validators.set(key, v);
    }
    return v;
  }

  /** Asserts that `res`, the answer to METHOD on a path matching `template`, is what the document says; returns the body. */
  async check(method: string, template: string, res: Response): Promise<unknown> {
    const operation = `${method} ${template}`;
    const op = this.doc.paths[template]?.[method.toLowerCase()];
    expect(op, `${operation} is not in the document`).toBeDefined();
    const described = op.responses[String(res.status)];
    expect(
      described,
      `${operation} answered ${res.status}, which the document does not list (it lists ${Object.keys(op.responses).join(', ')})`,
    ).toBeDefined();
    this.answered.add(operation);
    const text = await res.text();
    if (!described.content) {
      expect(text, `${operation} ${res.status} has no content in the document`).toBe('');
      return undefined;
    }
    const mediaType = (res.headers.get('content-type') ?? '').split(';')[0].trim();
    const media = described.content[mediaType];
    expect(media, `${operation} ${res.status} answered ${mediaType}; the document lists ${Object.keys(described.content).join(', ')}`).toBeDefined();
    const body = mediaType.endsWith('json') ? JSON.parse(text) : text;
    const validate = this.validator(`${operation} ${res.status} ${mediaType}`, media.schema);
    expect(validate(body), `${operation} ${res.status}: ${this.ajv.errorsText(validate.errors)}`).toBe(true);
    return body;
  }
}

describe('OpenAPI document', () => {
  let h: ApiHarness;
  let doc: OpenApiDoc;
  let answers: AnswerChecker;
  beforeAll(async () => {
    h = await startHarness();
    await approvedGlass(h, 'glass');
    const res = await h.request('/api/v1/openapi.json');
    expect(res.status).toBe(200);
    doc = (await res.clone().json()) as OpenApiDoc;
    answers = new AnswerChecker(doc);
    await answers.check('GET', '/api/v1/openapi.json', res);
  });
  afterAll(() => h.stop());

  it('is served without a token as OpenAPI 3.1 and describes exactly the routes the app registers', () => {
    expect(doc.openapi).toBe('3.1.0');
    const served = Object.entries(doc.paths)
      .flatMap(([path, item]) => Object.keys(item).map((m) => `${m.toUpperCase()} ${path}`))
      .sort();
    expect(served).toEqual(documentedOperations());
    expect(registeredOperations(createApp({ registry: h.registry }))).toEqual(served);
  });

  it('names a path parameter for every {param} in a path', () => {
    for (const [path, item] of Object.entries(doc.paths)) {
      const inPath = [...path.matchAll(/\{(\w+)\}/g)].map((m) => m[1]).sort();
      for (const op of Object.values(item)) {
        const declared = (op.parameters ?? [])
          .filter((p) => p.in === 'path')
          .map((p) => p.name)
          .sort();
        expect(declared, path).toEqual(inPath);
      }
    }
  });

  it('materials: list, search, create, show; refusals as documented', async () => {
    const list = (await answers.check('GET', '/api/v1/materials', await h.request('/api/v1/materials'))) as { materials: { slug: string }[] };
    expect(list.materials.map((m) => m.slug)).toEqual(['glass']);
    await answers.check('GET', '/api/v1/materials', await h.request('/api/v1/materials?q=gla', { as: 'reader' }));
    await answers.check('GET', '/api/v1/materials', await h.request('/api/v1/materials', { token: 'nkl_not-a-token' }));

    const created = await h.request('/api/v1/materials', { ...json({ slug: 'mgf2', name: 'MgF2, e-beam' }), as: 'editor' });
    expect(created.status).toBe(201);
    await answers.check('POST', '/api/v1/materials', created);
    for (const [init, status] of [
      [{ ...json({ slug: 'mgf2', name: 'again' }), as: 'editor' as const }, 409],
      [{ ...json({ slug: 'x-y', name: 'X', colour: 'red' }), as: 'editor' as const }, 422],
      [{ ...json({ slug: 'x-y', name: 'X' }), as: 'reader' as const }, 403],
      [json({ slug: 'x-y', name: 'X' }), 401],
    ] as const) {
      const res = await h.request('/api/v1/materials', init);
      expect(res.status).toBe(status);
      await answers.check('POST', '/api/v1/materials', res);
    }

    const shown = (await answers.check('GET', '/api/v1/materials/{slug}', await h.request('/api/v1/materials/glass'))) as {
      material: { slug: string };
    };
    expect(shown.material.slug).toBe('glass');
    await answers.check('GET', '/api/v1/materials/{slug}', await h.request('/api/v1/materials/no-such'));
    await answers.check('GET', '/api/v1/materials/{slug}', await h.request('/api/v1/materials/Not_A_Slug'));
    await answers.check(
      'PATCH',
      '/api/v1/materials/{slug}',
      await h.request('/api/v1/materials/mgf2', { ...json({ description: 'e-beam, 250 C', tags: ['fluoride'] }), method: 'PATCH', as: 'editor' }),
    );
    await answers.check(
      'PATCH',
      '/api/v1/materials/{slug}',
      await h.request('/api/v1/materials/mgf2', { ...json({ slug: 'other' }), method: 'PATCH', as: 'editor' }),
    );
  });

  it('versions: upload (CSV, fitted, wrong media type), show, 304, n,k as JSON and CSV, refusals', async () => {
    const upload = await h.request('/api/v1/materials/mgf2/versions', { ...csv(csvTable(1.38)), as: 'editor' });
    expect(upload.status).toBe(201);
    expect(await answers.check('POST', '/api/v1/materials/{slug}/versions', upload)).toMatchObject({ ref: 'mgf2@1', status: 'draft' });
    const fitted = await h.request('/api/v1/materials/mgf2/versions?fit=cauchy', { ...csv(csvTable(1.39)), as: 'editor' });
    expect(fitted.status).toBe(201);
    await answers.check('POST', '/api/v1/materials/{slug}/versions', fitted);
    await answers.check(
      'POST',
      '/api/v1/materials/{slug}/versions',
      await h.request('/api/v1/materials/mgf2/versions', { ...json({ table: [] }), as: 'editor' }),
    );
    await answers.check(
      'POST',
      '/api/v1/materials/{slug}/versions',
      await h.request('/api/v1/materials/mgf2/versions', { ...csv('wavelength_nm,n,k\n400,x,0\n'), as: 'editor' }),
    );
    await answers.check(
      'POST',
      '/api/v1/materials/{slug}/versions',
      await h.request('/api/v1/materials/no-such/versions', { ...csv(csvTable()), as: 'editor' }),
    );

    const version = await h.request('/api/v1/materials/glass/versions/1');
    const etag = version.headers.get('etag')!;
    expect(await answers.check('GET', '/api/v1/materials/{slug}/versions/{n}', version)).toMatchObject({ ref: 'glass@1', status: 'approved' });
    const notModified = await h.request('/api/v1/materials/glass/versions/1', { headers: { 'if-none-match': etag } });
    expect(notModified.status).toBe(304);
    await answers.check('GET', '/api/v1/materials/{slug}/versions/{n}', notModified);
    await answers.check('GET', '/api/v1/materials/{slug}/versions/{n}', await h.request('/api/v1/materials/glass/versions/9'));
    await answers.check('GET', '/api/v1/materials/{slug}/versions/{n}', await h.request('/api/v1/materials/glass/versions/two'));

    const nk = '/api/v1/materials/{slug}/versions/{n}/nk';
    const values = (await answers.check('GET', nk, await h.request('/api/v1/materials/glass/versions/1/nk?wavelengths_nm=450,650'))) as {
      n: number[];
    };
    expect(values.n).toHaveLength(2);
    const table = await answers.check(
      'GET',
      nk,
      await h.request('/api/v1/materials/glass/versions/1/nk?from_nm=400&to_nm=800&step_nm=100', { headers: { accept: 'text/csv' } }),
    );
    expect(String(table).trim().split('\n')).toHaveLength(6);
    await answers.check(
      'GET',
      nk,
      await h.request('/api/v1/materials/glass/versions/1/nk?wavelengths_nm=450', { headers: { 'if-none-match': etag } }),
    );
    await answers.check('GET', nk, await h.request('/api/v1/materials/glass/versions/1/nk?wavelengths_nm=450', { headers: { accept: 'image/png' } }));
    await answers.check('GET', nk, await h.request('/api/v1/materials/glass/versions/1/nk'));
    await answers.check('GET', nk, await h.request('/api/v1/materials/glass/versions/1/nk?wavelengths_nm=100'));
    await answers.check('GET', nk, await h.request('/api/v1/materials/glass/versions/7/nk?wavelengths_nm=450'));
    const posted = (await answers.check(
      'POST',
      nk,
      await h.request('/api/v1/materials/glass/versions/1/nk', json({ wavelengths_nm: [450, 550, 650] })),
    )) as { n: number[] };
    expect(posted.n).toHaveLength(3);
    await answers.check('POST', nk, await h.request('/api/v1/materials/glass/versions/1/nk', json({ wavelengths_nm: [-5] })));
    await answers.check(
      'POST',
      nk,
      await h.request('/api/v1/materials/glass/versions/1/nk', {
        method: 'POST',
        body: 'wavelengths_nm=450',
        headers: { 'content-type': 'text/plain' },
      }),
    );
  });

  it('lifecycle: approve, retire, withdraw and their refusals', async () => {
    const base = '/api/v1/materials/{slug}/versions/{n}';
    const approved = await h.request('/api/v1/materials/mgf2/versions/1/approve', { method: 'POST', as: 'approver' });
    expect(approved.status).toBe(200);
    await answers.check('POST', `${base}/approve`, approved);
    await answers.check('POST', `${base}/approve`, await h.request('/api/v1/materials/mgf2/versions/1/approve', { method: 'POST', as: 'approver' }));
    await answers.check('POST', `${base}/approve`, await h.request('/api/v1/materials/mgf2/versions/2/approve', { method: 'POST', as: 'editor' }));
    await answers.check('POST', `${base}/retire`, await h.request('/api/v1/materials/mgf2/versions/1/retire', { ...json({}), as: 'approver' }));
    const retired = await h.request('/api/v1/materials/mgf2/versions/1/retire', { ...json({ reason: 'substrate batch recalled' }), as: 'approver' });
    expect(retired.status).toBe(200);
    await answers.check('POST', `${base}/retire`, retired);
    const withdrawn = await h.request('/api/v1/materials/mgf2/versions/2/withdraw', { method: 'POST', as: 'approver' });
    expect(withdrawn.status).toBe(200);
    await answers.check('POST', `${base}/withdraw`, withdrawn);
    await answers.check(
      'POST',
      `${base}/withdraw`,
      await h.request('/api/v1/materials/mgf2/versions/2/withdraw', { method: 'POST', as: 'approver' }),
    );
  });

  it("review: the queue, one version's summary, and approve with and without accept_warnings", async () => {
    const base = '/api/v1/materials/{slug}/versions/{n}';
    await createMaterial(h.registry, { slug: 'film', name: 'Film' }, 'editor');
    const kk = { verdict: 'inconsistent', summary: 'n is not what k implies', tolerance: 0.005, rms_dn: 0.003, max_dn: 0.01, worst_nm: 700 };
    await importVersion(h.registry, { slug: 'film', table: cauchyTable(1.7), kk: kk as StoredKkReport }, 'editor');
    const queue = await h.request('/api/v1/review', { as: 'approver' });
    expect(queue.status).toBe(200);
    expect(await answers.check('GET', '/api/v1/review', queue)).toMatchObject({ may_approve: true });
    await answers.check('GET', '/api/v1/review', await h.request('/api/v1/review', { as: 'editor' }));
    await answers.check('GET', '/api/v1/review', await h.request('/api/v1/review', { token: 'nkl_unknown' }));
    const one = await h.request('/api/v1/materials/film/versions/1/review', { as: 'reader' });
    expect(one.status).toBe(200);
    await answers.check('GET', `${base}/review`, one);
    await answers.check('GET', `${base}/review`, await h.request('/api/v1/materials/film/versions/9/review', { as: 'reader' }));
    const refused = await h.request('/api/v1/materials/film/versions/1/approve', { method: 'POST', as: 'approver' });
    expect(refused.status).toBe(409);
    await answers.check('POST', `${base}/approve`, refused);
    await answers.check(
      'POST',
      `${base}/approve`,
      await h.request('/api/v1/materials/film/versions/1/approve', { ...json({ accept_warnings: '' }), as: 'approver' }),
    );
    const accepted = await h.request('/api/v1/materials/film/versions/1/approve', { ...json({ accept_warnings: 'known artefact' }), as: 'approver' });
    expect(accepted.status).toBe(200);
    expect(await answers.check('POST', `${base}/approve`, accepted)).toMatchObject({ accepted_warnings: { findings: ['kk-inconsistent'] } });
  });

  it('locks, fit and KK: answers and refusals', async () => {
    const lock = (await lockAdd(h.registry, emptyLockfile(), 'glass@1')).lock;
    expect(await answers.check('POST', '/api/v1/locks/verify', await h.request('/api/v1/locks/verify', json(lock)))).toMatchObject({ ok: true });
    await answers.check('POST', '/api/v1/locks/verify', await h.request('/api/v1/locks/verify', json({ materials: [] })));
    const fit = await h.request('/api/v1/fit?model=cauchy', csv(csvTable()));
    expect(fit.status).toBe(200);
    expect(await answers.check('POST', '/api/v1/fit', fit)).toMatchObject({ report: { model: 'cauchy' } });
    await answers.check('POST', '/api/v1/fit', await h.request('/api/v1/fit?model=cauchy', csv('wavelength_nm,n\n400,1.5\n')));
    const kk = await h.request('/api/v1/kk', csv(csvTable()));
    expect(kk.status).toBe(200);
    expect(await answers.check('POST', '/api/v1/kk', kk)).toMatchObject({ report: { verdict: 'uninformative' } });
    await answers.check('POST', '/api/v1/kk', await h.request('/api/v1/kk', csv('wavelength_nm,n,k\n400,1.5,-1\n')));
    const stack = await h.request(
      '/api/v1/stack?at=450,550&angle=0,60&sweep=1=0:200:50',
      json({ layers: [{ material: { n: 1.38 }, thickness_nm: 100 }], substrate: { material: { n: 1.52 } } }),
    );
    expect(stack.status).toBe(200);
    expect(await answers.check('POST', '/api/v1/stack', stack)).toHaveProperty('results');
    await answers.check(
      'POST',
      '/api/v1/stack',
      await h.request('/api/v1/stack?at=550', json({ layers: [], substrate: { material: { file: 'x.csv' } } })),
    );
    const psiDelta = (sample: object) => {
      const body = new FormData();
      body.set('data', new Blob(['wavelength_nm,angle,psi,delta\n400,70,20,120\n500,70,22,110\n600,70,24,100\n']), 'run.csv');
      body.set('sample', JSON.stringify(sample));
      body.set('starts', '1');
      return { method: 'POST', body };
    };
    const film = { layers: [{ material: { n: 1.46 }, thickness_nm: 100, fit: ['thickness_nm'] }], substrate: { material: { n: 3.9, k: 0.02 } } };
    const fitted = await h.request('/api/v1/ellipsometry/fit', psiDelta(film));
    expect(fitted.status, await fitted.clone().text()).toBe(200);
    expect(await answers.check('POST', '/api/v1/ellipsometry/fit', fitted)).toHaveProperty('parameters.thickness_nm');
    await answers.check('POST', '/api/v1/ellipsometry/fit', await h.request('/api/v1/ellipsometry/fit', psiDelta({ ...film, layers: [] })));
  });

  it('tokens and settings: admin answers and refusals', async () => {
    await answers.check('GET', '/api/v1/tokens', await h.request('/api/v1/tokens', { as: 'admin' }));
    await answers.check('GET', '/api/v1/tokens', await h.request('/api/v1/tokens', { as: 'reader' }));
    const created = await h.request('/api/v1/tokens', { ...json({ user: 'lab-tech', role: 'reader', expires: '30d' }), as: 'admin' });
    expect(created.status).toBe(201);
    expect(String(((await answers.check('POST', '/api/v1/tokens', created)) as { token: string }).token)).toMatch(/^nkl_/);
    await answers.check('POST', '/api/v1/tokens', await h.request('/api/v1/tokens', { ...json({ user: 'x', role: 'overlord' }), as: 'admin' }));
    const victim = (await createToken(h.registry, { user: 'victim', role: 'reader', createdBy: 'setup' })).id;
    await answers.check('POST', '/api/v1/tokens/{id}/revoke', await h.request(`/api/v1/tokens/${victim}/revoke`, { method: 'POST', as: 'admin' }));
    await answers.check('POST', '/api/v1/tokens/{id}/revoke', await h.request('/api/v1/tokens/no-such-id/revoke', { method: 'POST', as: 'admin' }));

    await answers.check('GET', '/api/v1/settings', await h.request('/api/v1/settings', { as: 'admin' }));
    const set = await h.request('/api/v1/settings/max_nk_points', { ...json({ value: 5000 }), method: 'PUT', as: 'admin' });
    expect(set.status).toBe(200);
    await answers.check('PUT', '/api/v1/settings/{key}', set);
    await answers.check(
      'PUT',
      '/api/v1/settings/{key}',
      await h.request('/api/v1/settings/max_nk_points', { ...json({ value: 'many' }), method: 'PUT', as: 'admin' }),
    );
    await answers.check(
      'PUT',
      '/api/v1/settings/{key}',
      await h.request('/api/v1/settings/no_such_key', { ...json({ value: 1 }), method: 'PUT', as: 'admin' }),
    );
    await answers.check('DELETE', '/api/v1/settings/{key}', await h.request('/api/v1/settings/max_nk_points', { method: 'DELETE', as: 'admin' }));
  });

  it('takes its limits from the zod schemas the routes validate with', () => {
    const schemas = doc.components.schemas as Record<string, { properties: Record<string, Record<string, unknown>>; required?: string[] }>;
    expect(schemas.NewMaterial.required).toEqual(['slug', 'name']);
    expect(schemas.NewMaterial.properties.slug).toMatchObject({ maxLength: 64, pattern: SLUG_PATTERN.source });
    expect(schemas.NewMaterial.properties.name).toMatchObject({ maxLength: 200 });
    expect(schemas.NewMaterial.properties.tags).toMatchObject({ maxItems: 50, items: { maxLength: 40 } });
    const show = doc.paths['/api/v1/materials/{slug}'].get.responses['200'].content?.['application/json'].schema as {
      properties: Record<string, unknown>;
    };
    expect(show.properties.versions).toEqual({ type: 'array', items: { $ref: '#/components/schemas/Version' } });
    for (const [path, item] of Object.entries(doc.paths)) {
      for (const [method, op] of Object.entries(item)) {
        for (const [status, answer] of Object.entries(op.responses)) {
          if (Number(status) >= 400) expect(Object.keys(answer.content ?? {}), `${method} ${path} ${status}`).toEqual(['application/problem+json']);
        }
      }
    }
  });

  it('front-door refusals (400 not JSON, 413 too large, 415 media type) and numbers in fields as documented', async () => {
    const notJson = await h.request('/api/v1/materials', {
      method: 'POST',
      body: '{"slug": ',
      headers: { 'content-type': 'application/json' },
      as: 'editor',
    });
    expect(notJson.status).toBe(400);
    await answers.check('POST', '/api/v1/materials', notJson);
    const textBody = await h.request('/api/v1/materials', {
      method: 'POST',
      body: 'slug=x',
      headers: { 'content-type': 'text/plain' },
      as: 'editor',
    });
    expect(textBody.status).toBe(415);
    await answers.check('POST', '/api/v1/materials', textBody);
    await writeSetting(h.registry, 'max_body_bytes', 1024, 'test');
    try {
      const big = await h.request('/api/v1/materials', { ...json({ slug: 'big', name: 'x'.repeat(2000) }), as: 'editor' });
      expect(big.status).toBe(413);
      await answers.check('POST', '/api/v1/materials', big);
      const bigTable = await h.request('/api/v1/kk', csv(csvTable().repeat(3)));
      expect(bigTable.status).toBe(413);
      await answers.check('POST', '/api/v1/kk', bigTable);
    } finally {
      await resetSetting(h.registry, 'max_body_bytes', 'test');
    }
    // Fields that are numbers follow the one decimal grammar: "..", "1e999", "0x10" and "NaN" are refused, never NaN.
    for (const tolerance of ['..', '1e999', '0x10', 'NaN', '-1']) {
      const res = await h.request(`/api/v1/kk?tolerance=${encodeURIComponent(tolerance)}`, csv(csvTable()));
      expect(res.status, tolerance).toBe(400);
      expect(((await answers.check('POST', '/api/v1/kk', res)) as { detail: string }).detail).toContain('tolerance');
    }
    const tolerant = await h.request('/api/v1/kk?tolerance=.02', csv(csvTable()));
    expect(((await answers.check('POST', '/api/v1/kk', tolerant)) as { report: { tolerance: number } }).report.tolerance).toBe(0.02);
    const range = await h.request('/api/v1/materials/glass/versions/1/nk?from_nm=400&to_nm=1e999&step_nm=10');
    expect(range.status).toBe(400);
    await answers.check('GET', '/api/v1/materials/{slug}/versions/{n}/nk', range);
  });

  it('server-mode routes: refs, export, diff, history, several-table import, lock add and outdated, whoami, verify, backup', async () => {
    const ref = (await answers.check('GET', '/api/v1/refs/{ref}', await h.request('/api/v1/refs/glass', { as: 'reader' }))) as {
      ref: string;
      sha256: string;
    };
    expect(ref.ref).toBe('glass@1');
    await answers.check('GET', '/api/v1/refs/{ref}', await h.request(`/api/v1/refs/${encodeURIComponent(`glass@sha256:${ref.sha256.slice(0, 8)}`)}`));
    await answers.check('GET', '/api/v1/refs/{ref}', await h.request('/api/v1/refs/glass@9'));
    await answers.check('GET', '/api/v1/refs/{ref}', await h.request('/api/v1/refs/glass@1?extra=1'));
    const exported = await h.request('/api/v1/refs/glass@1/export?format=csv&x_unit=eV');
    expect(((await answers.check('GET', '/api/v1/refs/{ref}/export', exported)) as { text: string }).text).toMatch(/^# nkledger glass@1/);
    await answers.check('GET', '/api/v1/refs/{ref}/export', await h.request('/api/v1/refs/glass@1/export?format=xml'));
    await answers.check('GET', '/api/v1/refs/{ref}/export', await h.request('/api/v1/refs/glass@1/export?format=json', { token: 'nkl_nope' }));
    await answers.check('GET', '/api/v1/diff', await h.request('/api/v1/diff?a=glass@1&b=glass@1'));
    await answers.check('GET', '/api/v1/diff', await h.request('/api/v1/diff?a=glass@1'));
    await answers.check('GET', '/api/v1/diff', await h.request('/api/v1/diff?a=glass@1&b=glass@5'));
    await answers.check('GET', '/api/v1/materials/{slug}/history', await h.request('/api/v1/materials/glass/history'));
    await answers.check('GET', '/api/v1/materials/{slug}/history', await h.request('/api/v1/materials/no-such/history'));

    const form = (second: string) => {
      const f = new FormData();
      f.append('table', new Blob([csvTable(1.41)]), 'a.csv');
      f.append('table', new Blob([second]), 'b.csv');
      return f;
    };
    const imported = await h.request('/api/v1/materials/mgf2/imports', { method: 'POST', body: form(csvTable(1.42)), as: 'editor' });
    expect(imported.status).toBe(201);
    await answers.check('POST', '/api/v1/materials/{slug}/imports', imported);
    await answers.check(
      'POST',
      '/api/v1/materials/{slug}/imports',
      await h.request('/api/v1/materials/mgf2/imports', { method: 'POST', body: form('wavelength_nm,n,k\n400,x,0\n'), as: 'editor' }),
    );
    await answers.check(
      'POST',
      '/api/v1/materials/{slug}/imports',
      await h.request('/api/v1/materials/mgf2/imports', { ...csv(csvTable()), as: 'reader' }),
    );

    const added = await h.request('/api/v1/locks/add?ref=glass', json(emptyLockfile()));
    const lock = ((await answers.check('POST', '/api/v1/locks/add', added)) as { lock: unknown }).lock;
    await answers.check('POST', '/api/v1/locks/add', await h.request('/api/v1/locks/add?ref=glass@8', json(emptyLockfile())));
    await answers.check('POST', '/api/v1/locks/add', await h.request('/api/v1/locks/add', json(emptyLockfile())));
    await answers.check('POST', '/api/v1/locks/outdated', await h.request('/api/v1/locks/outdated', json(lock)));
    await answers.check('POST', '/api/v1/locks/outdated', await h.request('/api/v1/locks/outdated', json({ format: 'other' })));

    expect(await answers.check('GET', '/api/v1/whoami', await h.request('/api/v1/whoami', { as: 'approver' }))).toMatchObject({ user: 'approver' });
    await answers.check('GET', '/api/v1/whoami', await h.request('/api/v1/whoami'));
    expect(await answers.check('GET', '/api/v1/verify', await h.request('/api/v1/verify', { as: 'admin' }))).toMatchObject({ ok: true });
    await answers.check('GET', '/api/v1/verify', await h.request('/api/v1/verify', { as: 'approver' }));
    const backup = await h.request('/api/v1/backup', { as: 'admin' });
    expect(Number(backup.headers.get('x-nkledger-pages'))).toBeGreaterThan(0);
    expect(
      Buffer.from(await backup.clone().arrayBuffer())
        .subarray(0, 15)
        .toString(),
    ).toBe('SQLite format 3');
    await answers.check('GET', '/api/v1/backup', backup);
    await answers.check('GET', '/api/v1/backup', await h.request('/api/v1/backup'));
  });

  it('every documented operation was answered above at least once', () => {
    expect([...answers.answered].sort()).toEqual(documentedOperations());
  });
});
