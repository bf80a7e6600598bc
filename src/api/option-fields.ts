/** API fields from an option table (io/option-spec.ts): their zod schemas, hence their OpenAPI entries. */
import { z } from 'zod';
import { fieldOf, flagOf, type OptionSpec } from '../io/option-spec.ts';

/** One optional text field per option (`true`/`false` for a switch), described as the CLI's help with its flag. */
export function optionFields(specs: readonly OptionSpec[]): Record<string, z.ZodOptional<z.ZodString | z.ZodEnum<{ true: 'true'; false: 'false' }>>> {
  return Object.fromEntries(
    specs
      .filter((spec) => !spec.cliOnly)
      .map((spec) => {
        const list = spec.repeatable ? '; several as a comma-separated list' : '';
        const schema = spec.argument === undefined ? z.enum(['true', 'false']) : z.string().max(spec.maxLength ?? 2000);
        return [fieldOf(spec), schema.optional().describe(`${spec.description}${list} (CLI: ${flagOf(spec)})`)];
      }),
  );
}
