/**
 * The OpenAPI document and the app's routes stay equal: every registered route is described and
 * every described operation is registered (common practice: a description that drifts is worse than none).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../src/api/app.ts';
import { documentedOperations, OPENAPI_DOCUMENT } from '../../src/api/openapi.ts';
import { startHarness, type ApiHarness } from './harness.ts';

/** "METHOD /path/{param}" for every handler route of the app (middleware entries are method ALL). */
function registeredOperations(app: ReturnType<typeof createApp>): string[] {
  const ops = new Set<string>();
  for (const route of app.routes) {
    if (route.method === 'ALL') continue;
    ops.add(`${route.method} ${route.path.replace(/:([A-Za-z_]+)/g, '{$1}')}`);
  }
  return [...ops].sort();
}

describe('OpenAPI document', () => {
  let h: ApiHarness;
  beforeAll(async () => {
    h = await startHarness();
  });
  afterAll(() => h.stop());

  it('describes exactly the routes the app registers', () => {
    const app = createApp({ registry: h.registry });
    expect(registeredOperations(app)).toEqual(documentedOperations());
  });

  it('is served at /api/v1/openapi.json as OpenAPI 3.1 without a token', async () => {
    const res = await h.request('/api/v1/openapi.json');
    expect(res.status).toBe(200);
    const doc = await res.json();
    expect(doc.openapi).toBe('3.1.0');
    expect(doc).toEqual(JSON.parse(JSON.stringify(OPENAPI_DOCUMENT)));
  });

  it('names a path parameter for every {param} in a path', () => {
    for (const [path, item] of Object.entries(OPENAPI_DOCUMENT.paths)) {
      const inPath = [...path.matchAll(/\{(\w+)\}/g)].map((m) => m[1]).sort();
      for (const op of Object.values(item) as { parameters?: { name: string; in: string }[] }[]) {
        const declared = (op.parameters ?? []).filter((p) => p.in === 'path').map((p) => p.name).sort();
        expect(declared, path).toEqual(inPath);
      }
    }
  });
});
