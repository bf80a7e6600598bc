/**
 * Talking to an nkledger server: one request, its failures turned back into the errors the service layer
 * throws, so a front door words them exactly as it words a refusal made on the local file.
 *
 * - A problem document (RFC 9457) becomes the InputError it was made from: rule, message, place (file, line,
 *   column, field), option, value and remedies, so `describe(FLAG_WORDING)` gives the CLI's own text. Faults of
 *   the server's registry file (503/507, rules `registry-*`) become EnvironmentErrors.
 * - What is not an nkledger answer becomes one EnvironmentError naming the URL and what to check: nothing
 *   listening (`server-unreachable`), no answer in time (`server-timeout`), an HTML page or other text from a
 *   proxy (`server-not-nkledger`), a route the server does not have (`server-wrong-url`).
 * - A 503 with Retry-After from a busy server (its compute threads full) is retried a bounded number of times.
 */
import type { IncomingMessage } from 'node:http';
import { EnvironmentError, FIELD_WORDING, InputError, IntegrityError, formatLocation, type Remedy } from '../errors.ts';

/**
 * A server's answer: the few parts of the Fetch API's Response the client uses. Requests go through node:http
 * rather than fetch: in a fresh process Node 20's fetch cost about 200 ms more than node:http for one request
 * (`npx tsx scripts/bench-server-mode.ts`), which is most of a server-mode command's budget.
 */
export interface ServerAnswer {
  readonly ok: boolean;
  readonly status: number;
  readonly headers: { get(name: string): string | null };
  /** The body as it arrives (backups stream it into a file). */
  readonly body: AsyncIterable<Uint8Array>;
  text(): Promise<string>;
}

/**
 * The body's chunks. A connection that breaks or ends before the whole answer arrived is an error without an
 * errno code, so a caller writing the body to a file can tell it from a failed write.
 */
async function* chunksOf(res: IncomingMessage): AsyncGenerator<Uint8Array> {
  try {
    for await (const chunk of res) yield chunk as Buffer;
  } catch (err) {
    if ((err as Error).name === 'AbortError') throw err;
    throw new Error(`the connection broke: ${(err as Error).message}`);
  }
  if (!res.complete) throw new Error('the answer ended early');
}

function answerOf(res: IncomingMessage): ServerAnswer {
  const status = res.statusCode ?? 0;
  return {
    ok: status >= 200 && status < 300,
    status,
    headers: {
      get: (name) => {
        const value = res.headers[name.toLowerCase()];
        return value === undefined ? null : Array.isArray(value) ? value.join(', ') : String(value);
      },
    },
    body: chunksOf(res),
    async text() {
      const chunks: Uint8Array[] = [];
      for await (const chunk of this.body) chunks.push(chunk);
      return Buffer.concat(chunks).toString('utf8');
    },
  };
}

/**
 * One HTTP exchange; redirects are not followed (a redirect is reported as not an nkledger answer). node:http and
 * node:https are loaded on the first exchange: about 14 ms that a command in file mode never pays.
 */
async function exchange(
  target: URL,
  method: string,
  headers: Record<string, string>,
  body: Uint8Array | string | undefined,
  signal: AbortSignal,
): Promise<ServerAnswer> {
  const { request: send } = target.protocol === 'https:' ? await import('node:https') : await import('node:http');
  return new Promise((resolve, reject) => {
    const req = send(target, { method, headers, signal }, (res) => resolve(answerOf(res)));
    req.on('error', reject);
    req.end(body);
  });
}

export interface ServerClientOptions {
  /** Bearer token (NKLEDGER_TOKEN or the credentials file); none for anonymous reads. */
  token?: string;
  /** Per-request time limit in ms (default 30 s; NKLEDGER_TIMEOUT in seconds through the CLI). */
  timeoutMs?: number;
  /** How many times a busy server's 503 + Retry-After is retried before it is reported (default 3). */
  busyRetries?: number;
  /** Longest wait between busy retries, ms (default 5 s; tests shorten it). */
  maxRetryWaitMs?: number;
}

export interface RequestOptions {
  query?: Record<string, string | undefined>;
  /** A JSON body (sets Content-Type). */
  json?: unknown;
  /** Any other body, with its headers (multipart uploads). */
  body?: BodyInit;
  accept?: string;
  /** Rename problem documents' `file` (an upload's name on the server) back to the name the user gave. */
  fileNames?: Record<string, string>;
}

export const DEFAULT_TIMEOUT_MS = 30_000;

/**
 * The server's root URL as the user gave it, normalized: scheme and host, without a trailing slash or
 * `/api/v1` (both are accepted, since people paste either). Anything that is not http(s) is refused.
 */
export function normalizeServerUrl(text: string): string {
  let url: URL;
  try {
    url = new URL(text.trim());
  } catch {
    throw new InputError(
      'server-url',
      `"${text}" is not a URL: give the server's address, e.g. http://lab-server:8787`,
      {},
      {
        option: 'server',
        value: text,
      },
    );
  }
  if (url.protocol !== 'http:' && url.protocol !== 'https:')
    throw new InputError('server-url', `"${text}" is not an http:// or https:// address`, {}, { option: 'server', value: text });
  if (url.search || url.hash || url.username || url.password)
    throw new InputError(
      'server-url',
      `"${text}": give the server's address only, without query, fragment or credentials`,
      {},
      {
        option: 'server',
        value: text,
      },
    );
  const path = url.pathname.replace(/\/+$/, '').replace(/\/api\/v1$/, '');
  return `${url.protocol}//${url.host}${path}`;
}

export class ServerClient {
  readonly url: string;
  private readonly options: Required<Omit<ServerClientOptions, 'token'>> & { token?: string };

  constructor(url: string, options: ServerClientOptions = {}) {
    this.url = normalizeServerUrl(url);
    this.options = { timeoutMs: DEFAULT_TIMEOUT_MS, busyRetries: 3, maxRetryWaitMs: 5000, ...options };
  }

  /** GET/POST/… `/api/v1` + path and parse the JSON answer; any failure is thrown as described above. */
  async json<T>(method: string, path: string, options: RequestOptions = {}): Promise<T> {
    const response = await this.request(method, path, options);
    const text = await this.readBody(response, method, path);
    try {
      return JSON.parse(text) as T;
    } catch {
      throw this.notNkledger(response, method, path);
    }
  }

  /** The answer as a Response, once it is known to be a success (2xx) from an nkledger server. */
  async request(method: string, path: string, options: RequestOptions = {}): Promise<ServerAnswer> {
    for (let attempt = 0; ; attempt++) {
      const response = await this.send(method, path, options);
      if (response.ok) {
        const type = response.headers.get('content-type') ?? '';
        if (!options.accept && !type.startsWith('application/json')) throw this.notNkledger(response, method, path);
        return response;
      }
      const retryAfter = Number(response.headers.get('retry-after'));
      const problem = await this.problemOf(response, method, path);
      if (problem.rule === 'server-busy' && attempt < this.options.busyRetries && Number.isFinite(retryAfter)) {
        await new Promise((resolve) => setTimeout(resolve, Math.min(retryAfter * 1000, this.options.maxRetryWaitMs)));
        continue;
      }
      throw this.errorOf(problem, options.fileNames ?? {});
    }
  }

  private async send(method: string, path: string, options: RequestOptions): Promise<ServerAnswer> {
    const target = new URL(`${this.url}/api/v1${path}`);
    for (const [k, v] of Object.entries(options.query ?? {})) if (v !== undefined) target.searchParams.set(k, v);
    const headers: Record<string, string> = { accept: options.accept ?? 'application/json' };
    if (this.options.token !== undefined) headers.authorization = `Bearer ${this.options.token}`;
    let body: Uint8Array | string | undefined;
    if (options.json !== undefined) {
      headers['content-type'] = 'application/json';
      body = JSON.stringify(options.json);
    } else if (options.body !== undefined) {
      // A multipart form: the Fetch API's Response encodes it and names its boundary.
      const encoded = new Response(options.body);
      const type = encoded.headers.get('content-type');
      if (type) headers['content-type'] = type;
      body = new Uint8Array(await encoded.arrayBuffer());
    }
    try {
      return await exchange(target, method, headers, body, AbortSignal.timeout(this.options.timeoutMs));
    } catch (err) {
      throw this.transportError(err);
    }
  }

  /** Read a body within the time limit (a server may stall after the headers). */
  async readBody(response: ServerAnswer, method: string, path: string): Promise<string> {
    try {
      return await response.text();
    } catch (err) {
      throw this.transportError(err, `${method} ${path}`);
    }
  }

  private transportError(err: unknown, during?: string): EnvironmentError {
    const e = err as Error & { cause?: { code?: string; message?: string } };
    const where = `the nkledger server at ${this.url}`;
    if (e?.name === 'TimeoutError' || e?.name === 'AbortError')
      return new EnvironmentError(
        'server-timeout',
        `${where} did not answer within ${this.options.timeoutMs / 1000} s${during ? ` (${during})` : ''}: it may be overloaded or the network may drop the connection; try again, or raise NKLEDGER_TIMEOUT (seconds)`,
      );
    const code = e?.cause?.code ?? (e as NodeJS.ErrnoException)?.code;
    const why: Record<string, string> = {
      ECONNREFUSED: 'connection refused: nothing listens there; is `nkledger serve` running, and is the port right?',
      ENOTFOUND: 'no such host: check the host name in the URL',
      EAI_AGAIN: 'the host name could not be looked up (DNS): check the network and the host name',
      ECONNRESET: 'the connection was cut: check the server and any proxy in between',
      EHOSTUNREACH: 'no route to the host: check the network',
      ENETUNREACH: 'the network is unreachable: check the connection',
      ETIMEDOUT: 'the connection timed out: check the host and any firewall',
      UND_ERR_SOCKET: 'the connection was closed before an answer: check the server and any proxy',
    };
    const reason = (code && why[code]) ?? `${e?.cause?.message ?? e?.message ?? String(err)}: check the URL and that the server runs`;
    return new EnvironmentError('server-unreachable', `cannot reach ${where}: ${reason}`);
  }

  private notNkledger(response: ServerAnswer, method: string, path: string): EnvironmentError {
    const type = (response.headers.get('content-type') ?? 'no content type').split(';')[0];
    const what = type === 'text/html' ? 'an HTML page' : type;
    return new EnvironmentError(
      'server-not-nkledger',
      `${this.url} answered ${method} /api/v1${path} with ${what} (HTTP ${response.status}), not an nkledger answer: a proxy, a login page or another web server is at this address; check the URL (it is the address \`nkledger serve\` printed)`,
    );
  }

  /** The problem document of a failed answer, or an EnvironmentError when it is not one. */
  private async problemOf(response: ServerAnswer, method: string, path: string): Promise<ProblemFields> {
    const type = response.headers.get('content-type') ?? '';
    const text = await this.readBody(response, method, path);
    if (!type.startsWith('application/problem+json')) throw this.notNkledger(response, method, path);
    let doc: ProblemFields;
    try {
      doc = JSON.parse(text) as ProblemFields;
    } catch {
      throw this.notNkledger(response, method, path);
    }
    if (typeof doc.rule !== 'string' || typeof doc.detail !== 'string') throw this.notNkledger(response, method, path);
    if (doc.rule === 'route-not-found')
      throw new EnvironmentError(
        'server-wrong-url',
        `${this.url} has no route ${method} /api/v1${path}: the URL is not the root of an nkledger server (give the address \`nkledger serve\` printed, e.g. http://lab-server:8787), or the server is an older nkledger`,
      );
    return { ...doc, status: response.status };
  }

  /** The error a problem document was made from (see the file comment). */
  private errorOf(p: ProblemFields, fileNames: Record<string, string>): Error {
    if (p.rule === 'internal') return new Error(`the server at ${this.url} failed to answer (${p.detail})`);
    const location = {
      ...(p.file !== undefined && { file: fileNames[p.file] ?? p.file }),
      ...(p.line !== undefined && { line: p.line }),
      ...(p.column !== undefined && { column: p.column }),
      ...(p.field !== undefined && { field: p.field }),
    };
    const message = messageOf(p);
    if (p.status === 503 || p.status === 507) {
      if (p.rule === 'server-busy')
        return new EnvironmentError('server-busy', `the nkledger server at ${this.url} stayed busy (${message}); try again later`);
      return new EnvironmentError(p.rule, `the server at ${this.url}: ${message}`, location);
    }
    // A stored version that no longer matches its hash (IntegrityError): a fault of the server's data, as in file mode.
    if (p.status === 500) return new IntegrityError(message, p.rule);
    let text = message;
    if (p.status === 401) text = `${message}; log in with \`nkledger login ${this.url}\` or set NKLEDGER_TOKEN`;
    // Extension members (e.g. the `review` of a refused approval) go back where the service put them.
    const extensions = Object.fromEntries(Object.entries(p).filter(([k]) => !STANDARD_MEMBERS.has(k)));
    return new InputError(p.rule, text, location, {
      ...(Object.keys(extensions).length > 0 && { extensions }),
      ...(p.option !== undefined && { option: p.option }),
      ...(p.value !== undefined && { value: p.value }),
      ...(p.remedies !== undefined && { remedies: p.remedies }),
    });
  }
}

/** Members of a problem document that are not extensions (src/api/problem.ts). */
const STANDARD_MEMBERS = new Set(['type', 'title', 'status', 'detail', 'rule', 'file', 'line', 'column', 'field', 'option', 'value', 'remedies']);

interface ProblemFields {
  status: number;
  rule: string;
  detail: string;
  file?: string;
  line?: number;
  column?: number;
  field?: string;
  option?: string;
  value?: string;
  remedies?: Remedy[];
}

/**
 * The message inside a problem's `detail`, which the server wrote as `describe(FIELD_WORDING)`: the place in
 * front, the remedies worded as API fields and ` [rule]` behind. The client words remedies as flags again; the
 * options named in the message stay in backticks (`optionRef`), which the command line spells as flags.
 */
export function messageOf(p: Pick<ProblemFields, 'detail' | 'rule' | 'file' | 'line' | 'column' | 'remedies'>): string {
  let text = p.detail;
  const prefix = formatLocation({ file: p.file, line: p.line, column: p.column });
  if (prefix && text.startsWith(prefix)) text = text.slice(prefix.length);
  const suffix = ` [${p.rule}]`;
  if (text.endsWith(suffix)) text = text.slice(0, -suffix.length);
  const remedies = p.remedies?.length ? `: use ${p.remedies.map(FIELD_WORDING.remedy).join(' or ')}` : '';
  if (remedies && text.endsWith(remedies)) text = text.slice(0, -remedies.length);
  return text;
}
