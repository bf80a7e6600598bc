/** The `nkledger` process: run the CLI (run.ts) on the process's arguments and streams, and exit with its code. */
import { run } from './run.ts';

// `nkledger ... | head` closes the pipe early: stop quietly, as other command-line tools do, not with a stack trace.
for (const stream of [process.stdout, process.stderr]) {
  stream.on('error', (err: NodeJS.ErrnoException) => {
    if (err.code === 'EPIPE') process.exit(0);
    throw err;
  });
}

process.exitCode = await run(process.argv.slice(2));
