/**
 * RFC 9457 problem documents. Every error the API answers with is one of these, served as
 * `application/problem+json` with `type`, `title`, `status` and `detail`, plus the extension
 * members `rule` (nkledger's rule id), for a refused upload `file`, `line` and `column`, and where the
 * refusal names them `option`, `value` and `remedies` ([{option, value}], the fields that get past it).
 */
import { HTTPException } from 'hono/http-exception';
import { BusyError, EnvironmentError, FIELD_WORDING, InputError } from '../errors.ts';
import { HttpProblem, statusOf } from '../http-status.ts';

export { HttpProblem, statusOf };

export const PROBLEM_CONTENT_TYPE = 'application/problem+json';

/** Problem type URIs are URNs named after the rule id: stable identifiers, not links (RFC 9457 §3.1.1). */
export function problemType(rule: string): string {
  return `urn:nkledger:problem:${rule}`;
}

export interface ProblemDocument {
  type: string;
  title: string;
  status: number;
  detail: string;
  rule: string;
  file?: string;
  line?: number;
  column?: number;
  [extension: string]: unknown;
}

const TITLES: Record<number, string> = {
  400: 'Bad Request',
  401: 'Unauthorized',
  403: 'Forbidden',
  404: 'Not Found',
  405: 'Method Not Allowed',
  406: 'Not Acceptable',
  409: 'Conflict',
  413: 'Content Too Large',
  415: 'Unsupported Media Type',
  422: 'Unprocessable Content',
  431: 'Request Header Fields Too Large',
  500: 'Internal Server Error',
  503: 'Service Unavailable',
  507: 'Insufficient Storage',
};

export function problemFromError(err: unknown): { problem: ProblemDocument; headers: Record<string, string> } {
  if (err instanceof InputError) {
    const status = TITLES[statusOf(err)] ? statusOf(err) : 400;
    const problem: ProblemDocument = {
      // Extension members first, so they can never replace a standard member.
      ...err.extensions,
      type: problemType(err.rule),
      title: TITLES[status],
      status,
      // The same "file:line:col: message [rule]" text the CLI prints, so a person can find the line.
      // Remedies worded as API fields (input_unit=um), not as CLI flags.
      detail: err.describe(FIELD_WORDING),
      rule: err.rule,
      ...err.location,
      ...(err.option !== undefined && { option: err.option }),
      ...(err.value !== undefined && { value: err.value }),
      ...(err.remedies.length > 0 && { remedies: err.remedies }),
    };
    const headers = err instanceof HttpProblem ? err.headers : err instanceof BusyError ? { 'retry-after': String(err.retryAfterSeconds) } : {};
    return { problem, headers };
  }
  if (err instanceof EnvironmentError) {
    // A fault of the server's environment (disk full, read-only, corrupt, replaced registry file): say what.
    const status = TITLES[statusOf(err)] ? statusOf(err) : 503;
    const problem: ProblemDocument = { type: problemType(err.rule), title: TITLES[status], status, detail: err.describe(), rule: err.rule };
    return { problem, headers: status === 503 ? { 'retry-after': '60' } : {} };
  }
  if (err instanceof HTTPException && TITLES[err.status]) {
    // hono's own refusals (e.g. a multipart body it cannot parse).
    const rule = `http-${err.status}`;
    const problem = { type: problemType(rule), title: TITLES[err.status], status: err.status, detail: err.message, rule };
    return { problem, headers: {} };
  }
  return {
    problem: {
      type: problemType('internal'),
      title: TITLES[500],
      status: 500,
      detail: 'the server failed to answer this request; the fault is logged on the server',
      rule: 'internal',
    },
    headers: {},
  };
}

export function problemResponse(err: unknown): Response {
  const { problem, headers } = problemFromError(err);
  return new Response(JSON.stringify(problem), {
    status: problem.status,
    headers: { 'content-type': PROBLEM_CONTENT_TYPE, 'cache-control': 'no-store', ...headers },
  });
}
