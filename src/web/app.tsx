/** @jsxImportSource hono/jsx */
/**
 * The browser workspace: server-rendered pages over the service layer, mounted at / beside the API's
 * /api/v1 by `nkledger serve` and the demo. Pages read without JavaScript; the one script only enhances.
 * Every answer carries a strict Content-Security-Policy (only this server's stylesheet and script, forms
 * only to this server, no framing); POSTs pass the origin and CSRF checks of session.ts first.
 */
import { Hono, type Context } from 'hono';
import { bodyLimit } from 'hono/body-limit';
import { compress } from 'hono/compress';
import { HTTPException } from 'hono/http-exception';
import { EnvironmentError, InputError } from '../errors.ts';
import { HttpProblem, statusOf } from '../http-status.ts';
import { environmentFault } from '../registry/faults.ts';
import { endSession, startSession } from '../service/web-sessions.ts';
import { SCRIPT, SCRIPT_PATH, STYLESHEET, STYLESHEET_PATH } from './assets.ts';
import { pageContext, type WebEnv, type WebOptions } from './context.ts';
import { Note, PAGE_WORDING, page } from './layout.tsx';
import { registerComparePage } from './pages/compare.tsx';
import { registerMaterialPages } from './pages/materials.tsx';
import { registerReviewPages } from './pages/review.tsx';
import { registerUploadPages } from './pages/upload.tsx';
import { registerVersionPages } from './pages/version.tsx';
import {
  clearSessionCookie,
  guardForms,
  loadSession,
  localPath,
  SIGN_IN_COOKIE,
  setSessionCookie,
  signInSecret,
  signInSecretMatches,
} from './session.ts';
import { deleteCookie } from 'hono/cookie';

export type { WebOptions } from './context.ts';

const CSP = [
  "default-src 'none'",
  "style-src 'self'",
  "script-src 'self'",
  "img-src 'self' data:",
  "form-action 'self'",
  "frame-ancestors 'none'",
  "base-uri 'none'",
].join('; ');

const TITLES: Record<number, string> = {
  400: 'That could not be done',
  401: 'Please sign in',
  403: 'Not allowed',
  404: 'Not found',
  409: 'Refused by the registry’s rules',
  413: 'Too large',
  422: 'That could not be done',
  503: 'The registry is unavailable',
  507: 'The registry is out of space',
};

export function createWebPages(options: WebOptions & { logFault?: (err: unknown) => void }): Hono<WebEnv> {
  const ctx = pageContext(options);
  const logFault = options.logFault ?? ((err: unknown) => console.error('nkledger serve: internal error on a page:', err));
  const app = new Hono<WebEnv>();

  app.onError((err, c) => {
    const fault = environmentFault(err, options.registry.path);
    let status = 500;
    let message = 'something went wrong inside nkledger; the error was logged on the server';
    if (fault) {
      console.error(`nkledger serve: ${fault.describe()}`);
      status = statusOf(fault);
      message = fault.message;
    } else if (err instanceof InputError || err instanceof EnvironmentError) {
      status = statusOf(err);
      message = err instanceof InputError ? err.describe(PAGE_WORDING) : err.message;
    } else if (err instanceof HTTPException) {
      status = err.status;
      message = err.message;
    } else logFault(err);
    const session = c.get('session') ?? null;
    const next = c.req.method === 'GET' ? c.req.path + (new URL(c.req.url).search || '') : '/';
    c.header('cache-control', 'no-store');
    return c.html(
      page({
        title: TITLES[status] ?? 'Error',
        session,
        current: 'none',
        children: (
          <>
            <h1>{TITLES[status] ?? 'Error'}</h1>
            <Note kind="bad">{message}</Note>
            {status === 401 && (
              <p>
                <a href={`/sign-in?next=${encodeURIComponent(next)}`}>Sign in with your token</a>
              </p>
            )}
            <p>
              <a href="/">Back to the materials</a>
            </p>
          </>
        ),
      }),
      status as 400,
    );
  });

  app.use('*', async (c, next) => {
    await next();
    c.header('content-security-policy', CSP);
    c.header('x-content-type-options', 'nosniff');
    c.header('referrer-policy', 'same-origin');
    c.header('x-frame-options', 'DENY');
  });
  app.use('*', compress());

  const asset = (path: string, a: { body: string; type: string }) =>
    app.get(path, (c) => c.body(a.body, 200, { 'content-type': a.type, 'cache-control': 'public, max-age=31536000, immutable' }));
  asset(STYLESHEET_PATH, STYLESHEET);
  asset(SCRIPT_PATH, SCRIPT);

  app.use('*', loadSession(ctx));
  app.use('*', async (c, next) => {
    if (c.req.method === 'GET' || c.req.method === 'HEAD') return next();
    const maxSize = (await ctx.currentSettings()).max_body_bytes;
    return bodyLimit({
      maxSize,
      onError: () => {
        throw new HttpProblem(413, 'body-too-large', `the form is larger than ${maxSize} bytes (setting max_body_bytes)`);
      },
    })(c, next);
  });
  app.use('*', guardForms());
  app.use('*', async (c, next) => {
    await next();
    // Pages show who is signed in and per-session secrets: never stored by shared caches.
    if (!c.res.headers.has('cache-control')) c.header('cache-control', 'no-store');
  });

  app.get('/sign-in', (c) => {
    const session = c.get('session');
    const next = localPath(c.req.query('next'), '/');
    return c.html(
      page({
        title: 'Sign in',
        session,
        current: 'sign-in',
        children: (
          <>
            <h1>Sign in</h1>
            {session ? (
              <p>
                You are signed in as {session.principal.user} ({session.principal.role}). <a href={next}>Continue</a>
              </p>
            ) : (
              <form method="post" action="/sign-in">
                <input type="hidden" name="sign_in" value={signInSecret(c)} />
                <input type="hidden" name="next" value={next} />
                <label for="token">Your API token</label>
                <input type="password" id="token" name="token" required autocomplete="off" spellcheck={false} aria-describedby="token-hint" />
                <p class="hint" id="token-hint">
                  Paste the token an administrator made for you with <code>nkledger token create</code> (it starts with nkl_). It is checked once; the
                  browser then keeps only a session cookie, which ends on sign-out, after 12 hours, or when the token is revoked.
                </p>
                <p>
                  <button type="submit">Sign in</button>
                </p>
              </form>
            )}
          </>
        ),
      }),
    );
  });

  app.post('/sign-in', async (c) => {
    const form = await c.req.parseBody();
    if (!signInSecretMatches(c, form.sign_in)) {
      throw new HttpProblem(403, 'csrf-mismatch', 'the sign-in form is out of date (or did not come from this server): open the sign-in page again');
    }
    const { secret } = await startSession(options.registry, typeof form.token === 'string' ? form.token : '');
    setSessionCookie(c, secret);
    deleteCookie(c, SIGN_IN_COOKIE, { path: '/sign-in' });
    return c.redirect(localPath(form.next, '/'), 303);
  });

  app.post('/sign-out', async (c) => {
    const session = c.get('session');
    if (session) await endSession(options.registry, session);

    clearSessionCookie(c);
    return c.redirect('/', 303);
  });

  registerMaterialPages(app, ctx);
  registerVersionPages(app, ctx);
  registerComparePage(app, ctx);
  registerReviewPages(app, ctx);
  registerUploadPages(app, ctx);
  return app;
}

/**
 * A catch-all handler for the API app that hands every path outside /api/ to the pages (registered last,
 * so the API's routes answer first, and unknown /api/ paths keep the API's own 404 problem document).
 */
export function forwardToPages(pages: Hono<WebEnv>) {
  return (c: Context) => (c.req.path === '/api' || c.req.path.startsWith('/api/') ? c.notFound() : pages.fetch(c.req.raw, c.env));
}
