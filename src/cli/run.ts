/**
 * The `nkledger` command line as a function: `run(argv, io)` parses argv (without "node nkledger"), runs the command
 * and resolves to its exit code, writing only through `io` (io.ts). main.ts calls it with the process's streams;
 * tests call it in-process and capture the text. Nothing here exits the process.
 *
 * Only the module of the command being run is imported (commands/index.ts): the others are registered as
 * placeholders with their one-line summary, for the top-level help and commander's "did you mean".
 */
import { Command, CommanderError } from 'commander';
import { commandName } from './command-name.ts';
import { COMMANDS, findCommand, loadCommand } from './commands/index.ts';
import { reportFailure } from './failure.ts';
import { processIo, setExitCode, withIo, type CliIo } from './io.ts';

export const VERSION = '0.1.0';

async function buildProgram(argv: string[], io: CliIo): Promise<Command> {
  const program = new Command();
  program
    .name('nkledger')
    .description(
      'Registry and fitter for measured optical constants (n, k).\n' +
        'Import tables, fit dispersion models, check Kramers-Kronig consistency, keep versioned approved records.',
    )
    .version(VERSION)
    .showHelpAfterError('(add --help for usage)')
    .configureOutput({ writeOut: (s) => io.stdout.write(s), writeErr: (s) => io.stderr.write(s) })
    .addHelpText('after', '\n`nkledger COMMAND --help` shows the arguments, options and examples of a command.')
    .exitOverride();

  const wanted = findCommand(commandName(argv));
  for (const entry of COMMANDS) {
    if (entry === wanted) {
      (await loadCommand(entry)).register(program);
      program.commands[program.commands.length - 1].summary(entry.summary);
    } else {
      program.command(entry.name).summary(entry.summary);
    }
  }
  program.commands.forEach(function everywhere(cmd: Command) {
    cmd.exitOverride();
    cmd.configureOutput({ writeOut: (s) => io.stdout.write(s), writeErr: (s) => io.stderr.write(s) });
    cmd.commands.forEach(everywhere);
  });
  // NKLEDGER_DB of this run's environment (which may not be the process's) as the default of --db.
  program.hook('preAction', (_root, action) => {
    if (action.options.some((o) => o.long === '--db') && action.getOptionValue('db') === undefined && io.env.NKLEDGER_DB !== undefined) {
      action.setOptionValue('db', io.env.NKLEDGER_DB);
    }
  });
  return program;
}

/** Run the CLI on `argv` (the words after `nkledger`) and resolve to the exit code. */
export async function run(argv: string[], io: Partial<CliIo> = {}): Promise<number> {
  const full = processIo(); // its stdin is a getter: spreading would open the process's stdin
  if (io.stdout) full.stdout = io.stdout;
  if (io.stderr) full.stderr = io.stderr;
  if (io.env) full.env = io.env;
  if (io.stdin) Object.defineProperty(full, 'stdin', { value: io.stdin });
  return withIo(full, async () => {
    try {
      const program = await buildProgram(argv, full);
      await program.parseAsync(argv, { from: 'user' });
    } catch (err) {
      if (err instanceof CommanderError) {
        // help and version "errors" are successful exits; everything else is a usage error: exit 2.
        const ok = err.code === 'commander.helpDisplayed' || err.code === 'commander.version' || err.code === 'commander.help';
        setExitCode(ok ? 0 : 2);
      } else {
        setExitCode(reportFailure(err));
      }
    }
  });
}
