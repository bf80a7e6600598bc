#!/usr/bin/env node
/**
 * Build: bundle the CLI (src/cli/main.ts) with esbuild into dist/, one flat folder. Each command module that
 * src/cli/commands/index.ts loads with import() becomes its own chunk, so a command loads only its code and the
 * parts of its dependencies it uses (tree-shaken; loading drizzle-orm's ~400 files one by one cost more than the
 * whole start-up budget). better-sqlite3 (native addon) and piscina (it finds its own worker file by __dirname) stay imports; the other packages are bundled.
 *
 * Paths found relative to a module's own file: every `new URL('<relative>', import.meta.url)` in src/ is
 * rebased to dist/ (all output files sit directly in dist/), so `../../drizzle` in src/registry/open.ts reads
 * the same folder from dist/. A `new URL('./x.ts', import.meta.url)` (a worker-thread entry) also makes x.ts an
 * entry point of its own and points at its output. Runs as `npm run build`, from `prepare` (npm install, npm ci)
 * and before the tests (vitest globalSetup), so the bin never runs older code than the sources under test.
 * Plain JavaScript so it needs nothing but esbuild; about a second.
 */
import { readdirSync, readFileSync, renameSync, rmSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const ROOT = fileURLToPath(new URL('..', import.meta.url));
const SRC = join(ROOT, 'src');
const OUT = join(ROOT, 'dist');
const MAIN = join(SRC, 'cli', 'main.ts');
const RUN = join(SRC, 'cli', 'run.ts');
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

const rebaseUrls = {
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

export async function build({ quiet = false } = {}) {
  let esbuild;
  try {
    esbuild = await import('esbuild');
  } catch {
    throw new Error('esbuild is not installed: run `npm install` (it is a devDependency of nkledger)');
  }
  const temp = join(ROOT, `dist.building-${process.pid}`);
  // nkledger.js: the process (bin/nkledger.js imports it); run.js: run(argv, io) for a program that drives the CLI in-process.
  const entryPoints = { nkledger: MAIN, run: RUN, ...Object.fromEntries(urlEntries().map((f) => [entryName(f), f])) };
  try {
    await esbuild.build({
      entryPoints,
      outdir: temp,
      bundle: true,
      splitting: true,
      chunkNames: '[name]-[hash]',
      external: ['better-sqlite3', 'piscina'],
      platform: 'node',
      format: 'esm',
      target: 'node20',
      sourcemap: 'linked',
      logLevel: 'warning',
      // Bundled CommonJS packages (commander, papaparse) call require() for Node's own modules.
      banner: { js: "import { createRequire as __nkCreateRequire } from 'node:module'; const require = __nkCreateRequire(import.meta.url);" },
      plugins: [rebaseUrls],
    });
  } catch (err) {
    rmSync(temp, { recursive: true, force: true });
    throw err;
  }
  // Swap in the new tree whole, so a command started during a build sees the old tree or the new one.
  const old = join(ROOT, `dist.old-${process.pid}`);
  try {
    renameSync(OUT, old);
  } catch (err) {
    if (err.code !== 'ENOENT') throw err;
  }
  renameSync(temp, OUT);
  rmSync(old, { recursive: true, force: true });
  if (!quiet) console.log(`nkledger: built ${Object.keys(entryPoints).join(', ')} into dist/`);
}

if (process.argv[1] && fileURLToPath(import.meta.url) === resolve(process.argv[1])) {
  build().catch((err) => {
    console.error(`nkledger build failed: ${err.message}`);
    process.exit(1);
  });
}
