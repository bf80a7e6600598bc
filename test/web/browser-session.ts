/**
 * A minimal browser for in-process page tests: keeps cookies, sends its Origin on POSTs as browsers do,
 * and remembers the CSRF secret of the last page it read.
 */
import type { Hono } from 'hono';

export interface Browser {
  get(path: string): Promise<Response>;
  post(path: string, form: Record<string, string> | FormData): Promise<Response>;
  cookie(): string;
  csrf(): string;
}

export function browserFor(app: Hono<any>, extraHeaders: Record<string, string> = {}, origin = 'http://localhost'): Browser {
  const jar = new Map<string, string>();
  let csrf = '';
  const remember = async (res: Response) => {
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';');
      const at = pair.indexOf('=');
      const value = pair.slice(at + 1);
      if (value === '' || /Max-Age=0/i.test(c)) jar.delete(pair.slice(0, at));
      else jar.set(pair.slice(0, at), value);
    }
    if ((res.headers.get('content-type') ?? '').startsWith('text/html')) {
      const m = /name="csrf" value="([^"]+)"/.exec(await res.clone().text());
      if (m) csrf = m[1];
    }
    return res;
  };
  const cookie = () => [...jar].map(([k, v]) => `${k}=${v}`).join('; ');
  return {
    cookie,
    csrf: () => csrf,
    get: async (path) => remember(await app.request(path, { headers: { ...extraHeaders, cookie: cookie() } })),
    post: async (path, form) =>
      remember(
        await app.request(path, {
          method: 'POST',
          body: form instanceof FormData ? form : new URLSearchParams(form),
          headers: { ...extraHeaders, cookie: cookie(), origin },
        }),
      ),
  };
}

/** Open the sign-in page, post the token; on success read a page so `csrf()` is the session's. */
export async function signIn(b: Browser, token: string): Promise<Response> {
  const form = await (await b.get('/sign-in')).text();
  const secret = /name="sign_in" value="([^"]+)"/.exec(form)?.[1] ?? '';
  const res = await b.post('/sign-in', { token, sign_in: secret, next: '/' });
  if (res.status === 303) await b.get('/');
  return res;
}
