/**
 * The one table of HTTP statuses (src/http-status.ts): the core's errors carry none, the API and the web pages
 * answer each error class and rule with the status its meaning has in RFC 9110 §15 (404 Not Found for a thing
 * that does not exist, 409 Conflict for a request against the registry's state, 422 Unprocessable Content for a
 * well-formed request the server cannot process, 503 Service Unavailable for a passing fault, 507 Insufficient
 * Storage from RFC 4918 §11.5), and every status the table gives is one the OpenAPI document lists for a route.
 */
import { describe, expect, it } from 'vitest';
import { problemFromError } from '../../src/api/problem.ts';
import { openApiDocument } from '../../src/api/openapi.ts';
import { BusyError, ConflictError, EnvironmentError, InputError, IntegrityError, NotFoundError, NumericalError } from '../../src/errors.ts';
import { CLASS_STATUS, HttpProblem, RULE_STATUS, statusOf } from '../../src/http-status.ts';
import { environmentFault } from '../../src/registry/faults.ts';

describe('the status of each error', () => {
  it('follows from the class by default', () => {
    expect(statusOf(new InputError('bad-option', 'x'))).toBe(400);
    expect(statusOf(new NotFoundError('x'))).toBe(404);
    expect(statusOf(new ConflictError('x'))).toBe(409);
    expect(statusOf(new NumericalError('x'))).toBe(422);
    expect(statusOf(new BusyError('x', 5))).toBe(503);
    expect(statusOf(new EnvironmentError('registry-read-only', 'x'))).toBe(503);
    expect(statusOf(new IntegrityError('x'))).toBe(500);
  });

  it('follows the rule where the rule names a case its class does not', () => {
    expect(statusOf(new InputError('file-not-found', 'no such file'))).toBe(404);
    expect(statusOf(new InputError('setting-value', 'x'))).toBe(422);
    expect(statusOf(new InputError('file-too-large', 'x'))).toBe(413);
    const full = environmentFault(Object.assign(new Error('database or disk is full'), { code: 'SQLITE_FULL' }), 'r.db');
    expect(full && statusOf(full)).toBe(507);
    expect(problemFromError(full).problem.status).toBe(507);
  });

  it('a front door may raise its own status, and a rephrased refusal keeps its class and so its status', () => {
    expect(statusOf(new HttpProblem(431, 'request-too-long', 'x'))).toBe(431);
    const again = new NotFoundError('no material "x"', 'material-unknown').rephrase('layer 1: no material "x"', { field: 'layers.0.ref' });
    expect(again).toBeInstanceOf(NotFoundError);
    expect([again.message, again.location, statusOf(again)]).toEqual(['layer 1: no material "x"', { field: 'layers.0.ref' }, 404]);
  });

  it('the core errors carry no status of their own', () => {
    for (const err of [
      new InputError('r', 'm'),
      new NotFoundError('m'),
      new BusyError('m', 1),
      new EnvironmentError('r', 'm'),
      new IntegrityError('m'),
    ])
      expect(Object.keys(err)).not.toContain('status');
  });

  it('every status of the table is one the OpenAPI document lists for some route', () => {
    const documented = new Set<number>();
    for (const item of Object.values(openApiDocument().paths as Record<string, Record<string, { responses?: Record<string, unknown> }>>))
      for (const op of Object.values(item)) for (const code of Object.keys(op.responses ?? {})) documented.add(Number(code));
    const statuses = [...Object.values(RULE_STATUS), ...CLASS_STATUS.map(([, status]) => status)];
    // 500 (a stored version that fails its hash check, like any fault of the server) may answer any route: not listed per route.
    expect(statuses.filter((s) => s !== 500 && !documented.has(s))).toEqual([]);
  });
});
