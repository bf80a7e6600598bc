/**
 * The CPU-heavy work of the HTTP API as plain tasks: a fit, a Kramers-Kronig check, or the heavy stage of
 * an upload, or the reading of a file for a preview, each from the uploaded bytes (parsing a large table is heavy too). Tasks and outcomes are
 * plain data (structured-clone safe), so `runComputeTask` runs the same on the server's worker threads
 * (compute-worker.ts, through compute-pool.ts) and in-process. Refusals travel as data and are rebuilt as
 * the same error classes on the other side (`rethrow`), so the front doors word them as before.
 */
import { ConflictError, InputError, NotFoundError, NumericalError, type InputErrorFields, type InputLocation } from '../errors.ts';
import { fitTable, type FitOptions } from '../fit/fit.ts';
import type { FitReport } from '../fit/types.ts';
import type { KkOptions } from '../kk/check.ts';
import { fitOptionsForAbsentK, kkCheck, type KkAnswer } from './absent-k.ts';
import { parseNkTable, type ImportOptions } from '../io/parse-table.ts';
import { prepareMeasurement, type MeasurementImport, type PreparedMeasurement } from './import-measurement.ts';
import { type EllipsometryOptions, type EllipsometryReport, fitEllipsometry, type ResolvedSample } from './ellipsometry.ts';
import type { PsiDeltaData } from '../io/parse-psi-delta.ts';
import { inspectReport, type InspectReport } from './inspect.ts';
import type { NkTable } from '../table.ts';
import { computeStack, type ResolvedDesign, type StackOptions, type StackReport } from './stack.ts';

export type ComputeTask =
  | { kind: 'fit'; bytes: Uint8Array; importOptions: ImportOptions; fit: FitOptions }
  | { kind: 'kk'; bytes: Uint8Array; importOptions: ImportOptions; kk: KkOptions }
  | { kind: 'measurement'; input: Omit<MeasurementImport, 'slug' | 'provenance'> }
  | { kind: 'stack'; design: ResolvedDesign; options: StackOptions }
  | { kind: 'ellipsometry'; sample: ResolvedSample; data: PsiDeltaData; options: EllipsometryOptions }
  | { kind: 'inspect'; bytes: Uint8Array; importOptions: ImportOptions };

export interface ComputeResults {
  fit: { warnings: string[]; report: FitReport };
  kk: { warnings: string[]; report: KkAnswer };
  measurement: PreparedMeasurement;
  stack: StackReport;
  ellipsometry: EllipsometryReport;
  inspect: { report: InspectReport; table: NkTable };
}

export type ComputeResult<T extends ComputeTask> = ComputeResults[T['kind']];

/** A refusal as data: the fields InputError and its subclasses are rebuilt from. */
interface RefusalData {
  name: string;
  rule: string;
  message: string;
  location: InputLocation;
  fields: InputErrorFields;
}

export type ComputeOutcome = { ok: true; value: unknown } | { ok: false; refusal: RefusalData };

function compute(task: ComputeTask): unknown {
  switch (task.kind) {
    case 'fit': {
      const imported = parseNkTable(task.bytes, task.importOptions);
      const absentK = fitOptionsForAbsentK(task.fit, !imported.detected.hasK);
      return { warnings: [...imported.warnings, ...absentK.notices], report: fitTable(imported.table, absentK.options) };
    }
    case 'kk': {
      const imported = parseNkTable(task.bytes, task.importOptions);
      return { warnings: imported.warnings, report: kkCheck(imported.table, task.kk, !imported.detected.hasK) };
    }
    case 'measurement':
      return prepareMeasurement(task.input);
    case 'stack':
      return computeStack(task.design, task.options);
    case 'ellipsometry':
      return fitEllipsometry(task.sample, task.data, task.options);
    case 'inspect': {
      // What a file reads as, before anything is stored (the web upload's preview).
      const imported = parseNkTable(task.bytes, task.importOptions);
      return { report: inspectReport(imported), table: imported.table };
    }
  }
}

/** Run a task; refusals of input come back as data, anything else (a bug) is thrown. */
export function runComputeTask(task: ComputeTask): ComputeOutcome {
  try {
    return { ok: true, value: compute(task) };
  } catch (err) {
    if (!(err instanceof InputError)) throw err;
    const fields: InputErrorFields = { option: err.option, value: err.value, remedies: err.remedies };
    return { ok: false, refusal: { name: err.name, rule: err.rule, message: err.message, location: err.location, fields } };
  }
}

/** The subclasses a refusal is rebuilt as, by name (a BusyError never comes out of a task: the pool raises it). */
const REFUSAL_CLASSES: Record<string, typeof NotFoundError | typeof ConflictError | typeof NumericalError> = {
  NotFoundError,
  ConflictError,
  NumericalError,
};

/** The value of an outcome, or its refusal thrown again as the error class it was. */
export function unwrapOutcome<T>(outcome: ComputeOutcome): T {
  if (outcome.ok) return outcome.value as T;
  const r = outcome.refusal;
  const Subclass = REFUSAL_CLASSES[r.name];
  if (Subclass) throw new Subclass(r.message, r.rule, r.location, r.fields);
  throw new InputError(r.rule, r.message, r.location, r.fields);
}
