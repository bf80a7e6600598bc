/**
 * Errors that reach a user. Every refusal of input is a value with a place:
 * the file, the 1-based line and column (as an editor shows them) and the rule broken.
 * The CLI maps these to exit code 2, the API to an RFC 9457 problem document. The errors carry no answer
 * code of any protocol: each front door decides it from the class and the rule.
 */

export interface InputLocation {
  /** File name as the user gave it ("-" or "<stdin>" for standard input, "<upload>" for an upload). */
  file?: string;
  /** 1-based line number. */
  line?: number;
  /** 1-based column number (the field position in delimited text, or the character column). */
  column?: number;
  /** The input field or option at fault, e.g. "layers.2.thickness_nm" (structured, for API problem documents). */
  field?: string;
}

/**
 * An option the user can set to get past a refusal, named neutrally (snake_case, as the API's fields):
 * `{ option: 'input_unit', value: 'um' }`. Each front door words it: the CLI as `--input-unit um`, the API
 * as `input_unit=um`. The core never writes a flag into a message: it names an option with `optionRef`.
 */
export interface Remedy {
  option: string;
  /** The value to give; absent for a switch (`allow_any_range`). `false` for a switch to turn off (`kk`). */
  value?: string | false;
}

/**
 * An option named inside a message: its neutral name (the API's field) in backticks, "`fix`". The core words
 * every option this way; each front door spells it when it words the refusal (`InputError.describe`): the command
 * line as its flag, `--fix`, the API as the field in backticks, a page as its form field.
 */
export const optionRef = (name: string): string => `\`${name}\``;
const OPTION_REF = /`([a-z][a-z0-9_]*)`/g;

/**
 * How a front door words a refusal: its remedies, the options named inside its message, and what to do next in
 * that front door's own terms (the command line names its commands and flags; the core names neither).
 */
export interface Wording {
  remedy(remedy: Remedy): string;
  option(name: string): string;
  /** A next step for this refusal, shown in parentheses after the message; none when undefined. */
  hint?(refusal: InputError): string | undefined;
}

/** The API's (and the default) wording: `input_unit=um`, `allow_any_range=true`, `kk=false`; options in backticks. */
export const FIELD_WORDING: Wording = {
  remedy: (r) => `${r.option}=${r.value === undefined ? 'true' : r.value === false ? 'false' : r.value}`,
  option: optionRef,
};

/** The command line's wording: `--input-unit um`, `--allow-any-range`, `--no-kk`; options as flags, `--fix`. */
export const FLAG_WORDING: Wording = {
  remedy: (r) => {
    const flag = r.option.replace(/_/g, '-');
    if (r.value === false) return `--no-${flag}`;
    return r.value === undefined ? `--${flag}` : `--${flag} ${/\s/.test(r.value) ? JSON.stringify(r.value) : r.value}`;
  },
  option: (name) => `--${name.replace(/_/g, '-')}`,
};

/** A message with the options it names (`optionRef`) spelled by `wording`. */
export const wordOptions = (message: string, wording: Wording): string => message.replace(OPTION_REF, (_all, name: string) => wording.option(name));

/** Structured fields of a refusal besides its place: the option or field at fault, its value, the remedies. */
export interface InputErrorFields {
  /** The option or field whose value is refused (neutral snake_case name), e.g. `header_line`. */
  option?: string;
  /** The refused value, as given. */
  value?: string;
  /** Options that get past the refusal, in order of likelihood. */
  remedies?: Remedy[];
  /** More structured members for the API's problem document (e.g. the review summary of a refused approval). */
  extensions?: Record<string, unknown>;
}

/** A refusal of user input: bad file, bad flag, bad reference. Maps to exit code 2. */
export class InputError extends Error {
  readonly rule: string;
  readonly location: InputLocation;
  readonly option?: string;
  readonly value?: string;
  readonly remedies: Remedy[];
  readonly extensions: Record<string, unknown>;

  constructor(rule: string, message: string, location: InputLocation = {}, fields: InputErrorFields = {}) {
    super(message);
    this.name = 'InputError';
    this.rule = rule;
    this.location = location;
    if (fields.option !== undefined) this.option = fields.option;
    if (fields.value !== undefined) this.value = fields.value;
    this.remedies = fields.remedies ?? [];
    this.extensions = fields.extensions ?? {};
  }

  /**
   * "file:line:col: message: use R1 or R2 [rule]", the form compilers use so editors can jump to it; the
   * remedies and the options the message names are worded by the front door (flags by default for the CLI,
   * `FIELD_WORDING` for the API).
   */
  describe(wording: Wording = FLAG_WORDING): string {
    const remedies = this.remedies.length ? `: use ${this.remedies.map(wording.remedy).join(' or ')}` : '';
    const hint = wording.hint?.(this);
    return `${formatLocation(this.location)}${wordOptions(this.message, wording)}${hint ? ` (${hint})` : ''}${remedies} [${this.rule}]`;
  }

  /** The same refusal (same class, rule and fields) with another message and place, e.g. prefixed with where it arose. */
  rephrase(message: string, location: InputLocation = this.location): this {
    const copy = Object.create(Object.getPrototypeOf(this)) as this;
    Object.assign(copy, this, { location });
    Object.defineProperty(copy, 'message', { value: message, writable: true, configurable: true });
    Object.defineProperty(copy, 'stack', { value: `${this.name}: ${message}`, writable: true, configurable: true });
    return copy;
  }
}

/** A thing that was asked for by name and does not exist (unknown material, version). */
export class NotFoundError extends InputError {
  constructor(message: string, rule = 'not-found', location: InputLocation = {}, fields: InputErrorFields = {}) {
    super(rule, message, location, fields);
    this.name = 'NotFoundError';
  }
}

/** A request that conflicts with the registry's rules (approve your own draft, change an approved version). */
export class ConflictError extends InputError {
  constructor(message: string, rule = 'conflict', location: InputLocation = {}, fields: InputErrorFields = {}) {
    super(rule, message, location, fields);
    this.name = 'ConflictError';
  }
}

/** A numerical computation that could not produce a trustworthy result (singular matrix, divergence). */
export class NumericalError extends InputError {
  constructor(message: string, rule = 'numerical-failure', location: InputLocation = {}, fields: InputErrorFields = {}) {
    super(rule, message, location, fields);
    this.name = 'NumericalError';
  }
}

/**
 * The service cannot take more work now (every compute thread busy, queue full). Nothing was done; the
 * same request may succeed after `retryAfterSeconds` (the API's Retry-After).
 */
export class BusyError extends InputError {
  readonly retryAfterSeconds: number;
  constructor(message: string, retryAfterSeconds: number, rule = 'server-busy') {
    super(rule, message);
    this.name = 'BusyError';
    this.retryAfterSeconds = retryAfterSeconds;
  }
}

/**
 * A fault of the environment, not of the input nor of nkledger: the disk is full, the registry file is
 * read-only, corrupt, or was removed or replaced under a running server. The CLI exits 4; the API answers
 * that the service is unavailable. The message says what happened and whether anything was written.
 */
export class EnvironmentError extends Error {
  readonly rule: string;
  readonly location: InputLocation;

  constructor(rule: string, message: string, location: InputLocation = {}) {
    super(message);
    this.name = 'EnvironmentError';
    this.rule = rule;
    this.location = location;
  }

  /** "file: message [rule]", as InputError.describe() writes it. */
  describe(): string {
    return `${formatLocation(this.location)}${this.message} [${this.rule}]`;
  }
}

export function formatLocation(loc: InputLocation): string {
  const parts: string[] = [];
  if (loc.file !== undefined) parts.push(loc.file);
  if (loc.line !== undefined) parts.push(String(loc.line));
  if (loc.line !== undefined && loc.column !== undefined) parts.push(String(loc.column));
  return parts.length ? `${parts.join(':')}: ` : '';
}

/**
 * Stored content that no longer matches its SHA-256: the database was edited outside nkledger. A fault of the
 * registry's data, not of the user's input: the CLI exits 4 as for a corrupt registry, the API answers that
 * the server failed (a retry will not help). Raised on read so a tampered version is never served as if it were good.
 */
export class IntegrityError extends EnvironmentError {
  constructor(message: string, rule = 'integrity-hash-mismatch') {
    super(rule, message);
    this.name = 'IntegrityError';
  }
}
