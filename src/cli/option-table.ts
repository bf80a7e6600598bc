/** Commander flags from an option table (io/option-spec.ts): `--NAME <arg>`, repeatable ones collected, `--no-NAME` where negatable. */
import { Option, type Command } from 'commander';
import { flagOf, type OptionSpec } from '../io/option-spec.ts';

const collect = (value: string, previous: string[] = []) => [...previous, value];

export function addOptionTable(cmd: Command, specs: readonly OptionSpec[]): Command {
  for (const spec of specs) {
    const flag = flagOf(spec);
    const option = new Option(spec.argument ? `${flag} ${spec.argument}` : flag, spec.description);
    cmd.addOption(spec.repeatable ? option.argParser(collect) : option);
    if (spec.negation) cmd.addOption(new Option(`--no-${flag.slice(2)}`, spec.negation));
  }
  return cmd;
}
