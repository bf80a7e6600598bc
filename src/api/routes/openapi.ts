/** GET /api/v1/openapi.json: the description built from the routes' OPERATIONS, served without a token (it describes, it holds no data). */
import type { Hono } from 'hono';
import type { ApiEnv } from '../auth.ts';
import { openApiDocument } from '../openapi.ts';

export function registerOpenApiRoute(app: Hono<ApiEnv>): void {
  // No token and no Cache-Control, so a shared cache may keep it heuristically: say it varies by Origin
  // (an answer to a browser carries CORS headers, one to a script does not).
  app.get('/api/v1/openapi.json', (c) => c.json(openApiDocument(), 200, { vary: 'Origin' }));
}
