/** The `nkledger` process around a `run(argv)`: a closed stdout ends it quietly, and the exit code is run's. */
export async function runProcess(run: (argv: string[]) => Promise<number>): Promise<void> {
  // `nkledger ... | head` closes the pipe early: stop quietly, as other command-line tools do, not with a stack trace.
  for (const stream of [process.stdout, process.stderr]) {
    stream.on('error', (err: NodeJS.ErrnoException) => {
      if (err.code === 'EPIPE') process.exit(0);
      throw err;
    });
  }
  process.exitCode = await run(process.argv.slice(2));
}
