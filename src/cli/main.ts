/**
 * The `nkledger` command line. Thin: it parses arguments, calls the service layer and renders output.
 * Each command lives in its own file under ./commands and is listed in ./commands/index.ts.
 */
import { Command, CommanderError } from 'commander';
import { registerCommands } from './commands/index.ts';
import { reportFailure } from './failure.ts';

// `nkledger ... | head` closes the pipe early: stop quietly, as other command-line tools do, not with a stack trace.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (err: NodeJS.ErrnoException) => {
    if (err.code === 'EPIPE') process.exit(0);
    throw err;
  });
}

const program = new Command();
program
  .name('nkledger')
  .description(
    'Registry and fitter for measured optical constants (n, k).\n' +
      'Import tables, fit dispersion models, check Kramers-Kronig consistency, keep versioned approved records.',
  )
  .version('0.1.0')
  .showHelpAfterError('(add --help for usage)')
  .exitOverride();

registerCommands(program);
program.commands.forEach(function exitOverrideEverywhere(cmd: Command) {
  cmd.exitOverride();
  cmd.commands.forEach(exitOverrideEverywhere);
});

try {
  await program.parseAsync(process.argv);
} catch (err) {
  if (err instanceof CommanderError) {
    // help and version "errors" are successful exits; everything else is a usage error: exit 2.
    const ok = err.code === 'commander.helpDisplayed' || err.code === 'commander.version' || err.code === 'commander.help';
    process.exitCode = ok ? 0 : 2;
  } else {
    process.exitCode = reportFailure(err);
  }
}
