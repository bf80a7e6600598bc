/** `nkledger settings show|set|reset`: every setting of the registry and its HTTP API (self-approval, anonymous reads, CORS, limits). */
import type { Command } from 'commander';
import { readSettings, resetSetting, SETTING_KEYS, SETTINGS, writeSettingText, type Settings } from '../../service/settings.ts';
import { guarded } from '../failure.ts';
import { formatTable, printJson, printLines } from '../output.ts';
import { actorFrom, addAsOption, addDbOption, withRegistry } from '../admin-options.ts';

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

  addDbOption(settings.command('show'))
    .description('print every setting with its value and meaning')
    .option('--json', 'print JSON')
    .action(guarded(async (opts: { db?: string; json?: boolean }) => printSettings(await withRegistry(opts, readSettings), opts.json)));

  addAsOption(addDbOption(settings.command('set')))
    .description(`set a setting: ${SETTING_KEYS.join(', ')} (lists comma-separated)`)
    .argument('<key>', 'setting name')
    .argument('<value>', 'e.g. on | off | https://design.example.org,https://tools.example.org | 1048576')
    .option('--json', 'print JSON')
    .action(
      guarded(async (key: string, value: string, opts: { db?: string; as?: string; json?: boolean }) =>
        printSettings(await withRegistry(opts, (r) => writeSettingText(r, key, value, actorFrom(opts))), opts.json),
      ),
    );

  addAsOption(addDbOption(settings.command('reset')))
    .description('forget a stored value so the default applies again')
    .argument('<key>', 'setting name')
    .option('--json', 'print JSON')
    .action(
      guarded(async (key: string, opts: { db?: string; as?: string; json?: boolean }) =>
        printSettings(await withRegistry(opts, (r) => resetSetting(r, key, actorFrom(opts))), opts.json),
      ),
    );
}
