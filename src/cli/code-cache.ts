/**
 * Running a command bundle with V8's code cache. Node 20 compiles every module's source at each start; for
 * `nkledger eval`, compiling was the largest part of the start-up. The build (scripts/build.js) therefore emits
 * the commands with a start-up target as one CommonJS file each, runs each on a few typical calls through
 * `produceCodeCache` (scripts/make-code-cache.js), and stores V8's compiled code beside it. `runCachedBundle` hands that code back to V8, which
 * then skips parsing and compiling what the warm-up compiled.
 *
 * V8 checks that the cache was made by the same V8 version and flags for a source of the same length, and
 * ignores it otherwise (the command then compiles as usual, only slower). It does not compare the text itself,
 * so the build always writes the bundle and its cache together into a fresh dist/, and the cache's file name
 * carries the bundle's content hash.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import Module, { createRequire } from 'node:module';
import { dirname } from 'node:path';
import { Script } from 'node:vm';
import type { CliIo } from './io.ts';

/** What a command bundle exports: run.ts's `run`. */
export interface CommandBundle {
  run(argv: string[], io?: Partial<CliIo>): Promise<number>;
}

interface Compiled {
  bundle: CommandBundle;
  script: Script;
}

/**
 * Compile `file` (CommonJS) as Node's loader would, with `cachedData` if given, and run its top level. `name` is
 * the file name stack traces show; V8 keeps the one the cache was made under.
 */
function compile(file: string, cachedData: Buffer | undefined, name = file): Compiled {
  const script = new Script(Module.wrap(readFileSync(file, 'utf8')), { filename: name, cachedData });
  const module = { exports: {} as CommandBundle };
  const wrapper = script.runInThisContext() as (...args: unknown[]) => void;
  wrapper.call(module.exports, module.exports, createRequire(file), module, file, dirname(file));
  return { bundle: module.exports, script };
}

/** The bundle `file`, compiled with the code cache `cacheFile` when it is there and V8 accepts it. */
export function runCachedBundle(file: string, cacheFile: string): CommandBundle {
  let cachedData: Buffer | undefined;
  try {
    cachedData = readFileSync(cacheFile);
  } catch {
    // No cache (a build without one, or removed): compile from source.
  }
  return compile(file, cachedData).bundle;
}

/**
 * Build step: run the bundle on each argument list of `runs` in turn, output discarded, then write V8's code for
 * every function compiled so far to `cacheFile`. Refuses a run that does not exit 0, so a bundle that cannot do
 * its warm-up fails the build. `name` is where the bundle will be run from (the build writes it elsewhere first).
 */
export async function produceCodeCache(file: string, cacheFile: string, runs: string[][], name: string): Promise<void> {
  const { bundle, script } = compile(file, undefined, name);
  for (const argv of runs) {
    let text = '';
    const sink = { write: (s: string) => (text += s) };
    const code = await bundle.run(argv, { stdout: sink, stderr: sink });
    if (code !== 0) throw new Error(`${file} ${argv.join(' ')} exited ${code}:\n${text}`);
  }
  writeFileSync(cacheFile, script.createCachedData());
}
