/** `nkledger settings show|set|reset`: every setting of the registry and its HTTP API (self-approval, anonymous reads, CORS, limits). */
import type { Command } from 'commander';
import { SETTING_KEYS, SETTINGS, type Settings } from '../../service/settings.ts';
import { guarded } from '../failure.ts';
import { formatTable, printJson, printLines } from '../output.ts';
import { addAsOption } from '../admin-options.ts';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';

function printSettings(settings: Settings, json?: boolean): void {
  if (json) return printJson(settings);
  const rows = SETTING_KEYS.map((k) => [k, JSON.stringify(settings[k]), SETTINGS[k].meaning]);
  printLines(formatTable(['setting', 'value', 'meaning'], rows));
}

export function register(program: Command): void {
  const settings = program
    .command('settings')
    .description('settings of the registry and its HTTP API (self-approval, anonymous reads, CORS, limits); every change is in the audit log')
    .addHelpText(
      'after',
      `\nSettings:\n${SETTING_KEYS.map((k) => `  ${k.padEnd(20)} ${SETTINGS[k].meaning} (default ${JSON.stringify(SETTINGS[k].default)})`).join('\n')}\n\n` +
        'A running `nkledger serve` reads them at start (changes through its API apply at once).\n\nExamples:\n' +
        '  nkledger settings show\n  nkledger settings set allow_self_approval on\n  nkledger settings set cors_origins https://design.example.org\n  nkledger settings reset cors_origins',
    );

  addRegistryOptions(settings.command('show'))
    .description('print every setting with its value and meaning')
    .option('--json', 'print JSON')
    .action(guarded(async (opts: RegistryFlags & { json?: boolean }) => printSettings(await registryOps(opts).settings(), opts.json)));

  addAsOption(addRegistryOptions(settings.command('set')))
    .description(`set a setting: ${SETTING_KEYS.join(', ')} (lists comma-separated)`)
    .argument('<key>', 'setting name')
    .argument('<value>', 'e.g. on | off | https://design.example.org,https://tools.example.org | 1048576')
    .option('--json', 'print JSON')
    .action(
      guarded(async (key: string, value: string, opts: RegistryFlags & { json?: boolean }) =>
        printSettings(await registryOps(opts).setSetting(key, value), opts.json),
      ),
    );

  addAsOption(addRegistryOptions(settings.command('reset')))
    .description('forget a stored value so the default applies again')
    .argument('<key>', 'setting name')
    .option('--json', 'print JSON')
    .action(
      guarded(async (key: string, opts: RegistryFlags & { json?: boolean }) => printSettings(await registryOps(opts).resetSetting(key), opts.json)),
    );
}
