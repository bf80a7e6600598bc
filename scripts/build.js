#!/usr/bin/env node
/**
 * Build: bundle the CLI with esbuild into dist/, one flat folder (tree-shaken; loading drizzle-orm's ~400 files
 * one by one cost more than the whole start-up budget). better-sqlite3 (native addon) and piscina (it finds its
 * own worker file by __dirname) stay imports; the other packages are bundled.
 *   - nkledger.js, the process (bin/nkledger.js imports it): reads the command's name and imports only
 *     cmd-<module>.js, one self-contained file per command of src/cli/commands/index.ts (cmd-none.js for
 *     `--help`, `--version` and unknown words). Node 20's ESM loader costs a few milliseconds per file, so
 *     one file per command starts faster than shared chunks. The commands of CACHED_COMMANDS (eval, which has
 *     a start-up target) are one CommonJS file each, cmd-<module>.cjs, run with V8's code cache made at build
 *     time (src/cli/code-cache.ts): compiling the bundle was most of their start-up.
 *   - run.js: `run(argv, io)` with every command, split by esbuild into chunks (each command's loaded only when
 *     it runs), for programs that drive the CLI in-process; the worker-thread entries.
 *
 * Paths found relative to a module's own file: every `new URL('<relative>', import.meta.url)` in src/ is
 * rebased to dist/ (all output files sit directly in dist/), so `../../drizzle` in src/registry/open.ts reads
 * the same folder from dist/. A `new URL('./x.ts', import.meta.url)` (a worker-thread entry) also makes x.ts an
 * entry point of its own and points at its output. Runs as `npm run build`, from `prepare` (npm install, npm ci)
 * and before the tests (vitest globalSetup), so the bin never runs older code than the sources under test.
 * Plain JavaScript so it needs nothing but esbuild; a few seconds.
 */
import { spawn } from 'node:child_process';
import { createHash } from 'node:crypto';
import { existsSync, readdirSync, readFileSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = fileURLToPath(new URL('..', import.meta.url));
const SRC = join(ROOT, 'src');
const OUT = join(ROOT, 'dist');
const RUN = join(SRC, 'cli', 'run.ts');
const COMMAND_INDEX = join(SRC, 'cli', 'commands', 'index.ts');
/** Commands built as CommonJS and run with V8's code cache (see build()): those with a start-up target. */
const CACHED_COMMANDS = ['eval'];
const CODE_CACHE = join(SRC, 'cli', 'code-cache.ts');
const URL_REF = /new URL\((['"])(\.\.?\/[^'"]*)\1,\s*import\.meta\.url\)/g;

function sources(dir) {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
    e.isDirectory() ? sources(join(dir, e.name)) : e.name.endsWith('.ts') && !e.name.endsWith('.d.ts') ? [join(dir, e.name)] : [],
  );
}

/** Output name (without .js) of a source file that is an entry point: its path under src/ with dashes. */
const entryName = (file) => relative(SRC, file).replace(/\.ts$/, '').split(/[\\/]/).join('-');

/** Source files referenced as `new URL('./x.ts', import.meta.url)`: entry points of their own (worker threads). */
function urlEntries() {
  const found = new Set();
  for (const file of sources(SRC)) {
    for (const m of readFileSync(file, 'utf8').matchAll(URL_REF)) {
      if (m[2].endsWith('.ts')) found.add(resolve(dirname(file), m[2]));
    }
  }
  return [...found];
}

/** esbuild plugin: rebase the `new URL(...)` references (see above). */
function rebaseUrls() {
  return {
    name: 'rebase-import-meta-urls',
    setup(build) {
      build.onLoad({ filter: /\.ts$/ }, (args) => {
        const text = readFileSync(args.path, 'utf8').replace(URL_REF, (_all, quote, ref) => {
          const target = resolve(dirname(args.path), ref);
          const rebased = ref.endsWith('.ts')
            ? `./${entryName(target)}.js`
            : relative(OUT, target).split(/[\\/]/).join('/') + (ref.endsWith('/') ? '/' : '');
          return `new URL(${quote}${rebased.startsWith('.') ? rebased : `./${rebased}`}${quote}, import.meta.url)`;
        });
        return { contents: text, loader: 'ts' };
      });
    },
  };
}

/**
 * The commands of src/cli/commands/index.ts: name and module file, from its entries
 * `{ name: 'eval', summary: '…', load: () => import('./eval.ts') }`.
 */
function commandModules() {
  const text = readFileSync(COMMAND_INDEX, 'utf8');
  const found = [...text.matchAll(/name: '([a-z-]+)',[\s\S]*?load: \(\) => import\('\.\/([a-z-]+)\.ts'\)/g)].map((m) => ({
    name: m[1],
    module: m[2],
  }));
  const loaders = text.match(/import\('\.\//g)?.length ?? 0;
  if (found.length === 0 || found.length !== loaders)
    throw new Error(`build: read ${found.length} of the ${loaders} command entries of ${COMMAND_INDEX}`);
  return found;
}

/**
 * esbuild plugin for the command bundles: entry `nk-command:eval` is run.ts with the eval module preloaded
 * (commands/index.ts `preloadCommand`), and the loaders in commands/index.ts stay unbundled dynamic imports that
 * are never called (run.ts takes the preloaded module; the dispatcher picks the bundle by the same command name).
 */
function commandEntries(commands) {
  return {
    name: 'command-entries',
    setup(build) {
      build.onResolve({ filter: /^nk-command:/ }, (args) => ({ path: args.path.slice('nk-command:'.length), namespace: 'nk-command' }));
      build.onLoad({ filter: /.*/, namespace: 'nk-command' }, (args) => ({
        contents:
          args.path === 'none'
            ? "export { run } from './run.ts';\n"
            : `import * as command from './commands/${args.path}.ts';\nimport { preloadCommand } from './commands/index.ts';\n` +
              `preloadCommand(${JSON.stringify(commands.find((c) => c.module === args.path).name)}, command);\nexport { run } from './run.ts';\n`,
        resolveDir: join(SRC, 'cli'),
        loader: 'ts',
      }));
      build.onResolve({ filter: /^\.\/[a-z-]+\.ts$/ }, (args) =>
        args.importer === COMMAND_INDEX && args.kind === 'dynamic-import' ? { path: args.path, external: true } : undefined,
      );
    },
  };
}

/**
 * esbuild plugin for the code-cached bundles (start-up, see build()): better-sqlite3's JavaScript is bundled, so
 * its fourteen files are not resolved, read and compiled one by one at each start, and its native addon is
 * required from the package's own build folder. The `bindings` package that better-sqlite3 calls to find the
 * addon locates the package from the caller's stack, which a bundle would mislead, so it is called only when
 * that folder has no addon, and then with the package's folder named. Commander loads `child_process` (and
 * with it net and dgram) for subcommands run as programs, which nkledger has none of: it is loaded on first use.
 */
function startupShortcuts() {
  const CALL = "require('bindings')('better_sqlite3.node')";
  const ADDON =
    "(() => { try { return require(require.resolve('better-sqlite3/build/Release/better_sqlite3.node')); } catch (e) { " +
    "if (e.code !== 'MODULE_NOT_FOUND') throw e; return require('bindings')({ bindings: 'better_sqlite3.node', " +
    "module_root: require('node:path').dirname(require.resolve('better-sqlite3/package.json')) }); } })()";
  return {
    name: 'startup-shortcuts',
    setup(build) {
      build.onLoad({ filter: /better-sqlite3[\\/]lib[\\/]database\.js$/ }, (args) => {
        const text = readFileSync(args.path, 'utf8');
        if (!text.includes(CALL)) throw new Error(`build: ${args.path} no longer loads its addon with ${CALL}; revisit startupShortcuts()`);
        return { contents: text.replace(CALL, ADDON), loader: 'js' };
      });
      build.onResolve({ filter: /^(node:)?child_process$/ }, (args) =>
        /[\\/]commander[\\/]/.test(args.importer) ? { path: 'child_process', namespace: 'lazy-builtin' } : undefined,
      );
      build.onLoad({ filter: /.*/, namespace: 'lazy-builtin' }, (args) => ({
        contents: `module.exports = new Proxy({}, { get: (_, key) => require('node:${args.path}')[key] });`,
        loader: 'js',
      }));
    },
  };
}

/**
 * dist/nkledger.js, the process: it reads the command's name with run.ts's own rule (command-name.ts) and
 * imports only that command's bundle (or the one without any command, for `--help`, `--version` and
 * unknown words), so a command loads one file instead of a few dozen chunks. A command of CACHED_COMMANDS is
 * compiled with its code cache (`caches`: command name → cache file).
 */
function dispatcher(commands, caches) {
  const bundles = Object.fromEntries(
    commands.map((c) => [c.name, CACHED_COMMANDS.includes(c.module) ? `./cmd-${c.module}.cjs` : `./cmd-${c.module}.js`]),
  );
  return `import { fileURLToPath } from 'node:url';
import { runCachedBundle } from './code-cache.ts';
import { commandName } from './command-name.ts';
import { runProcess } from './process-main.ts';
const BUNDLES = ${JSON.stringify(bundles)};
const CACHES = ${JSON.stringify(caches)};
const name = commandName(process.argv.slice(2));
const bundle = new URL(BUNDLES[name] ?? './cmd-none.js', import.meta.url);
const cache = Object.hasOwn(CACHES, name) ? new URL(CACHES[name], import.meta.url) : undefined;
await runProcess(async (argv) =>
  (cache ? runCachedBundle(fileURLToPath(bundle), fileURLToPath(cache)) : await import(bundle.href)).run(argv),
);
`;
}

/**
 * Warm up the fresh bundle `cmd-<module>.cjs` in `dir` and write V8's code cache beside it (scripts/make-code-cache.js),
 * named after the bundle's content hash; resolves to the cache's file name. The code is compiled under the bundle's
 * name in dist/, the one stack traces show (V8 keeps the name a cache was made under). A child process with Node's
 * default flags, so that the cache matches how `nkledger` runs (V8 ignores a cache made under other flags),
 * whatever process runs the build.
 */
async function makeCodeCache(dir, command) {
  const bundle = join(dir, `cmd-${command.module}.cjs`);
  const hash = createHash('sha256').update(readFileSync(bundle)).digest('hex').slice(0, 16);
  const cacheName = `cmd-${command.module}-${hash}.v8cache`;
  const args = [join(ROOT, 'scripts', 'make-code-cache.js'), dir, command.name, command.module, cacheName, join(OUT, `cmd-${command.module}.cjs`)];
  const { code, stderr } = await new Promise((done, fail) => {
    const child = spawn(process.execPath, args, { cwd: ROOT, stdio: ['ignore', 'ignore', 'pipe'] });
    let text = '';
    child.stderr.on('data', (d) => (text += d));
    child.on('error', fail);
    child.on('close', (status) => done({ code: status, stderr: text }));
  });
  if (code !== 0) throw new Error(`making the code cache of ${bundle} failed (exit ${code}):\n${stderr}`);
  return cacheName;
}

/** The inputs of a build: every file under src/, this script, the package manifests (bundled dependency versions) and tsconfig.json (read by esbuild). */
function inputsDigest() {
  const hash = createHash('sha256');
  const files = [
    ...filesUnder(SRC),
    fileURLToPath(import.meta.url),
    join(ROOT, 'scripts', 'make-code-cache.js'),
    join(ROOT, 'data', 'marrowick', 'sio2-thermal.csv'),
    ...['package.json', 'package-lock.json', 'tsconfig.json'].map((f) => join(ROOT, f)),
  ];
  for (const file of files.sort()) {
    hash.update(`${relative(ROOT, file)}\0`);
    try {
      hash.update(readFileSync(file));
    } catch {
      hash.update('(missing)');
    }
    hash.update('\0');
  }
  return hash.digest('hex');
}

function filesUnder(dir) {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? filesUnder(join(dir, e.name)) : [join(dir, e.name)]));
}

const DIGEST_FILE = 'inputs.sha256';

/**
 * Build dist/. With `ifChanged`, skip the build when dist/ was built from exactly the current inputs (the
 * digest of every source file, this script and the package manifests is kept in dist/inputs.sha256): the
 * tests' globalSetup uses it, so a test run after `npm install` or an earlier run does not rebuild the same
 * bundles, and a changed source is always rebuilt.
 */
export async function build({ quiet = false, ifChanged = false } = {}) {
  const digest = inputsDigest();
  if (ifChanged) {
    try {
      if (readFileSync(join(OUT, DIGEST_FILE), 'utf8') === digest && existsSync(join(OUT, 'nkledger.js'))) return;
    } catch {
      // no digest: build
    }
  }
  let esbuild;
  try {
    esbuild = await import('esbuild');
  } catch {
    throw new Error('esbuild is not installed: run `npm install` (it is a devDependency of nkledger)');
  }
  const temp = join(ROOT, `dist.building-${process.pid}`);
  const common = {
    outdir: temp,
    bundle: true,
    external: ['better-sqlite3', 'piscina'],
    platform: 'node',
    format: 'esm',
    target: 'node20',
    sourcemap: 'linked',
    logLevel: 'warning',
    // Bundled CommonJS packages (commander, papaparse) call require() for Node's own modules.
    banner: { js: "import { createRequire as __nkCreateRequire } from 'node:module'; const require = __nkCreateRequire(import.meta.url);" },
  };
  const commands = commandModules();
  try {
    await Promise.all([
      // run.js: run(argv, io) with every command, for a program that drives the CLI in-process; worker-thread
      // entries. Split, so that run.js loads each command's code only when it runs.
      esbuild.build({
        ...common,
        entryPoints: { run: RUN, 'cli-code-cache': CODE_CACHE, ...Object.fromEntries(urlEntries().map((f) => [entryName(f), f])) },
        splitting: true,
        chunkNames: '[name]-[hash]',
        plugins: [rebaseUrls()],
      }),
      // One self-contained bundle per command (run.ts with that command preloaded) and one with none. Each process
      // loads one of them: Node 20's ESM loader pays a few milliseconds per file, which for `nkledger eval` split
      // into ~25 chunks shared between commands cost more than the code itself.
      esbuild.build({
        ...common,
        entryPoints: Object.fromEntries(
          [...commands.map((c) => c.module).filter((m) => !CACHED_COMMANDS.includes(m)), 'none'].map((m) => [`cmd-${m}`, `nk-command:${m}`]),
        ),
        plugins: [commandEntries(commands), rebaseUrls()],
        // No source maps: 23 maps of a bundle each tripled the build time; the bundles are not minified and
        // name each source file in a comment, and run.js (the same code, split) keeps its maps.
        sourcemap: false,
      }),
      // The commands with a start-up target: one CommonJS file each (V8 caches code for a script, not for an ES
      // module, in Node 20), whitespace and syntax minified (names kept, for stack traces) since reading the text
      // is part of the start-up. Their dynamic imports are inlined and run only when called.
      ...CACHED_COMMANDS.map((m) =>
        esbuild.build({
          ...common,
          entryPoints: [`nk-command:${m}`],
          outdir: undefined,
          outfile: join(temp, `cmd-${m}.cjs`),
          format: 'cjs',
          minifyWhitespace: true,
          minifySyntax: true,
          // ES modules are strict; so is this file. import.meta.url becomes the file's own URL.
          banner: { js: "'use strict';const __nkMetaUrl=require('node:url').pathToFileURL(__filename).href;" },
          define: { 'import.meta.url': '__nkMetaUrl' },
          external: ['piscina', 'bindings', 'better-sqlite3/package.json', 'better-sqlite3/build/*'],
          plugins: [commandEntries(commands), rebaseUrls(), startupShortcuts()],
          sourcemap: false,
        }),
      ),
    ]);
    const cached = commands.filter((c) => CACHED_COMMANDS.includes(c.module));
    const cacheNames = await Promise.all(cached.map((c) => makeCodeCache(temp, c)));
    await esbuild.build({
      ...common,
      stdin: {
        contents: dispatcher(commands, Object.fromEntries(cached.map((c, i) => [c.name, `./${cacheNames[i]}`]))),
        resolveDir: join(SRC, 'cli'),
        sourcefile: 'nkledger.ts',
        loader: 'ts',
      },
      outfile: join(temp, 'nkledger.js'),
      outdir: undefined,
    });
  } catch (err) {
    rmSync(temp, { recursive: true, force: true });
    throw err;
  }
  writeFileSync(join(temp, DIGEST_FILE), digest);
  // Swap in the new tree whole, so a command started during a build sees the old tree or the new one.
  const old = join(ROOT, `dist.old-${process.pid}`);
  try {
    renameSync(OUT, old);
  } catch (err) {
    if (err.code !== 'ENOENT') throw err;
  }
  renameSync(temp, OUT);
  rmSync(old, { recursive: true, force: true });
  if (!quiet) console.log(`nkledger: built the process, ${commands.length} command bundles, run.js and the worker entries into dist/`);
}

if (process.argv[1] && fileURLToPath(import.meta.url) === resolve(process.argv[1])) {
  build({ ifChanged: process.argv.includes('--if-changed') }).catch((err) => {
    console.error(`nkledger build failed: ${err.message}`);
    process.exit(1);
  });
}
