#!/usr/bin/env node
// Entry point of the `nkledger` command: runs the build of src/ in dist/ (made by `npm install` through the
// `prepare` script, or `npm run build`). During development `npm run dev -- ARGS` runs the sources with tsx.
import { existsSync } from 'node:fs';

const main = new URL('../dist/nkledger.js', import.meta.url);
if (!existsSync(main)) {
  process.stderr.write('nkledger: the build is missing (dist/): run `npm install` or `npm run build` in the nkledger folder\n');
  process.exit(4);
}
await import(main.href);
