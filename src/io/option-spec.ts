/**
 * An option that every front door takes, defined once: the command line adds it as a flag (cli/option-table.ts),
 * the HTTP API as a query or form field with a zod schema and an OpenAPI entry (api/option-fields.ts), and the
 * one parser of its values sits beside its table (io/import-options.ts, service/fit-options.ts). The spellings
 * are derived from `name`: the CLI flag `--input-unit`, the API field `input_unit` (or `field` where it differs),
 * the parsed key `inputUnit` (commander's camelCase of the flag).
 */
export interface OptionSpec {
  /** Neutral snake_case name: the API field and the `option` of refusals and remedies. */
  name: string;
  /** The API field where it differs from `name` (range_nm for --range, which is in nm). */
  field?: string;
  /** Placeholder of the flag's value (`<unit>`); absent for a switch (`true`/`false` as an API field). */
  argument?: string;
  /** The flag may be given several times; the API field takes a comma-separated list. */
  repeatable?: boolean;
  /** A switch that can also be turned off on the command line (`--no-decimal-comma`), with this help. */
  negation?: string;
  /** What it does, as `--help` prints it (the API field's description adds its CLI spelling). */
  description: string;
  /** Longest value accepted as an API field (default 2000 characters). */
  maxLength?: number;
  /** Command line only (the API has its own limit for this, e.g. max_size vs the max_body_bytes setting). */
  cliOnly?: boolean;
}

/** The value an option received from a front door: text, a switch, or the items of a repeatable option. */
export type OptionValue = string | boolean | string[];

export const flagOf = (spec: OptionSpec): string => `--${spec.name.replace(/_/g, '-')}`;
export const fieldOf = (spec: OptionSpec): string => spec.field ?? spec.name;
/** The key a parsed value is kept under: commander's camelCase of the flag (`input_unit` → `inputUnit`). */
export const keyOf = (spec: OptionSpec): string => spec.name.replace(/_([a-z])/g, (_, c: string) => c.toUpperCase());

/** The spelling of the option kept under `key`, as the API names it (for messages); the key itself when unknown. */
export function fieldSpelling(specs: readonly OptionSpec[]): (key: string) => string {
  return (key) => {
    const spec = specs.find((s) => keyOf(s) === key);
    return spec ? fieldOf(spec) : key;
  };
}

/** The CLI spelling of the option kept under `key`: `--input-unit`. */
export const flagSpelling = (key: string): string => `--${key.replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`)}`;

/** API fields (text) → values keyed as the command line's parsed flags: switches to booleans, lists split on commas. */
export function valuesFromFields(specs: readonly OptionSpec[], fields: Record<string, string | undefined>): Record<string, OptionValue> {
  const out: Record<string, OptionValue> = {};
  for (const spec of specs) {
    const text = fields[fieldOf(spec)];
    if (text === undefined || spec.cliOnly) continue;
    out[keyOf(spec)] =
      spec.argument === undefined
        ? text === 'true'
        : spec.repeatable
          ? text
              .split(',')
              .map((s) => s.trim())
              .filter(Boolean)
          : text;
  }
  return out;
}

/**
 * The inverse of valuesFromFields: values keyed as the command line's parsed flags → API fields (text), for a
 * client that sends what a person typed to a server (src/client). Switches that are off and absent values are left
 * out; command-line-only options are never sent.
 */
export function fieldsFromValues(specs: readonly OptionSpec[], values: Record<string, unknown>): Record<string, string> {
  const out: Record<string, string> = {};
  for (const spec of specs) {
    const value = values[keyOf(spec)];
    if (value === undefined || spec.cliOnly) continue;
    if (spec.argument === undefined) {
      if (value === true || (value === false && spec.negation)) out[fieldOf(spec)] = String(value);
    } else out[fieldOf(spec)] = Array.isArray(value) ? value.join(',') : String(value);
  }
  return out;
}
