/**
 * The HTTP status each error answers with: one table for the two front doors that speak HTTP (the API's
 * problem documents, src/api/problem.ts, and the web pages, src/web/app.tsx). The core's errors carry no
 * status; the status follows from the error's class, or from its rule where the rule names a case the class
 * does not (a missing file is a refusal of input, answered 404). Only api and web import this file
 * (test/architecture/layers.test.ts).
 */
import {
  BusyError,
  ConflictError,
  EnvironmentError,
  InputError,
  type InputErrorFields,
  type InputLocation,
  IntegrityError,
  NotFoundError,
  NumericalError,
} from './errors.ts';

/** Rules answered with another status than their class's default. */
export const RULE_STATUS: Readonly<Record<string, number>> = {
  'file-too-large': 413,
  'file-not-found': 404,
  'lock-missing': 404,
  'export-no-model': 404,
  'setting-unknown': 404,
  'setting-value': 422,
  'sign-in-token': 401,
  'auth-token-expired': 401,
  'material-look-alike': 409,
  'approval-warnings-unaccepted': 409,
  'registry-disk-full': 507,
};

/** The default status of each error class, most specific first. */
export const CLASS_STATUS: ReadonlyArray<readonly [abstract new (...args: never[]) => Error, number]> = [
  [BusyError, 503],
  [NumericalError, 422],
  [ConflictError, 409],
  [NotFoundError, 404],
  [InputError, 400],
  [IntegrityError, 500],
  [EnvironmentError, 503],
];

/**
 * A refusal a front door raises itself with a status of its own (auth, content negotiation, body size),
 * carried to the error handler like any InputError.
 */
export class HttpProblem extends InputError {
  readonly status: number;
  readonly headers: Record<string, string>;
  constructor(
    status: number,
    rule: string,
    message: string,
    headers: Record<string, string> = {},
    location: InputLocation = {},
    fields: InputErrorFields = {},
  ) {
    super(rule, message, location, fields);
    this.name = 'HttpProblem';
    this.status = status;
    this.headers = headers;
  }
}

/** The HTTP status to answer an input or environment error with. */
export function statusOf(err: InputError | EnvironmentError): number {
  if (err instanceof HttpProblem) return err.status;
  const byRule = RULE_STATUS[err.rule];
  if (byRule !== undefined) return byRule;
  for (const [cls, status] of CLASS_STATUS) if (err instanceof cls) return status;
  return err instanceof InputError ? 400 : 503;
}
