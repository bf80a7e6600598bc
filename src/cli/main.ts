/**
 * The `nkledger` process from the sources (`npm run dev`): run the CLI (run.ts) on the process's arguments and
 * streams, and exit with its code. The build replaces this entry with one that loads only the bundle of the
 * command being run (scripts/build.js).
 */
import { runProcess } from './process-main.ts';
import { run } from './run.ts';

await runProcess(run);
