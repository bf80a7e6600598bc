/**
 * Layers import only downward: optics < models < plot < fit, kk, stack < io < registry < service < client < api, cli, web
 * (errors.ts and table.ts are shared by all). client (server mode's HTTP client) sits below cli, which uses it, and
 * never imports api: it speaks to a server only through HTTP. A relative import into a higher layer, or sideways between
 * layers of one rank, fails here. The sanctioned sideways imports: the CLI's `serve` and `demo` commands
 * start the HTTP server (src/api/server.ts), and `serve` (which the demo also runs) mounts the web pages
 * (src/web/app.tsx) on it; api and web never import each other.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { dirname, join, normalize, relative } from 'node:path';
import { describe, expect, it } from 'vitest';

const SRC = new URL('../../src/', import.meta.url).pathname;
const RANK: Record<string, number> = {
  optics: 0,
  models: 1,
  plot: 2,
  fit: 3,
  kk: 3,
  stack: 3,
  io: 4,
  registry: 5,
  service: 6,
  client: 6.5,
  api: 7,
  cli: 7,
  web: 7,
};
const ALLOWED = new Set(['cli/commands/serve.ts -> api/server.ts', 'cli/commands/demo.ts -> api/server.ts', 'cli/commands/serve.ts -> web/app.tsx']);

function sources(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
    e.isDirectory() ? sources(join(dir, e.name)) : /\.(ts|tsx)$/.test(e.name) ? [join(dir, e.name)] : [],
  );
}

const layerOf = (path: string): string | undefined => {
  const top = relative(SRC, path).split('/');
  return top.length > 1 ? top[0] : undefined;
};

describe('layers import only downward', () => {
  it('every relative import in src/ goes to the same layer, a lower one, or a shared file', () => {
    const upward: string[] = [];
    let imports = 0;
    for (const file of sources(SRC)) {
      const from = layerOf(file);
      if (!from) continue;
      for (const m of readFileSync(file, 'utf8').matchAll(/(?:from|import)\s*\(?\s*'(\.{1,2}\/[^']+)'/g)) {
        const target = normalize(join(dirname(file), m[1]));
        const to = layerOf(target);
        imports++;
        if (!to || to === from) continue;
        const edge = `${relative(SRC, file)} -> ${relative(SRC, target)}`;
        if (!(to in RANK) || !(from in RANK)) upward.push(`${edge} (unknown layer)`);
        else if (RANK[to] >= RANK[from] && !ALLOWED.has(edge)) upward.push(edge);
      }
    }
    expect(imports).toBeGreaterThan(200); // the scan saw the tree
    expect(upward).toEqual([]);
  });

  it('below the front doors nothing reads the process: environment, standard streams, exit code (passed in by CLI and API)', () => {
    // Sanctioned: the process id in temporary file names, and the working directory a design read from stdin resolves against.
    const SANCTIONED = /process\.(pid|cwd\(\))/g;
    const found: string[] = [];
    for (const file of sources(SRC)) {
      const layer = layerOf(file);
      if (layer === 'api' || layer === 'cli' || layer === 'web') continue;
      readFileSync(file, 'utf8')
        .split('\n')
        .forEach((line, i) => {
          const code = line.replace(/\/\/.*$|^\s*\*.*$/, '').replace(SANCTIONED, '');
          if (/\bprocess\.\w/.test(code)) found.push(`${relative(SRC, file)}:${i + 1}: ${line.trim()}`);
        });
    }
    expect(found).toEqual([]);
  });

  it('the core answers in no protocol: errors.ts and the layers below the front doors carry no HTTP status', () => {
    // The status table (src/http-status.ts) is read by api and web only; the client speaks HTTP by nature.
    const found: string[] = [];
    const errors = readFileSync(join(SRC, 'errors.ts'), 'utf8');
    if (/\bstatus\b|\bHTTP\b/.test(errors)) found.push('errors.ts mentions a status or HTTP');
    for (const file of sources(SRC)) {
      const layer = layerOf(file);
      if (layer === undefined || layer === 'api' || layer === 'web' || layer === 'cli' || layer === 'client') continue;
      const text = readFileSync(file, 'utf8');
      if (/from '[./]+\/http-status\.ts'|from '[./]+\/api\//.test(text)) found.push(`${relative(SRC, file)}: imports the HTTP status table`);
      // A status number passed to an error: `new XError(..., 404)` or a status line in a multi-line call.
      for (const m of text.matchAll(/new \w*(?:Error|Problem)\(((?:[^;]|;(?!\s*\n))*?)\);/g))
        if (/(?:,|^)\s*[1-5]\d\d\s*(?:,|$)/.test(m[1].replace(/`[^`]*`|'[^']*'/g, "''"))) found.push(`${relative(SRC, file)}: ${m[0].slice(0, 80)}`);
    }
    expect(found).toEqual([]);
  });

  it('SQL is written in the registry layer only: service, api and cli call registry/ functions', () => {
    const found: string[] = [];
    for (const file of sources(SRC)) {
      if (!['service', 'api', 'cli', 'web'].includes(layerOf(file) ?? '')) continue;
      readFileSync(file, 'utf8')
        .split('\n')
        .forEach((line, i) => {
          const code = /^\s*(\*|\/\/|\/\*)/.test(line) ? '' : line;
          if (/\.sqlite\.(prepare|exec|pragma)\(|\bsql`|\b(SELECT|PRAGMA)\s+[a-z_]+/.test(code))
            found.push(`${relative(SRC, file)}:${i + 1}: ${line.trim()}`);
        });
    }
    expect(found).toEqual([]);
  });
});
