/**
 * Every CLI command, in the order `nkledger --help` lists them: its name, the one line that list shows, and
 * how to load its module. run.ts imports a command's module only when that command runs (or shows its own help),
 * so `nkledger --help` and each command start without loading the others' dependencies. Add a command by adding
 * an entry here; test/cli/commands-manifest.test.ts checks every entry registers the command it names.
 */
import type { Command } from 'commander';

export interface CommandModule {
  register(program: Command): void;
}

export interface CommandEntry {
  name: string;
  /** One line for the top-level help; the command's own --help gives the full description. */
  summary: string;
  load: () => Promise<CommandModule>;
}

export const COMMANDS: CommandEntry[] = [
  { name: 'demo', summary: 'build and serve a demo registry of invented Marrowick Optics data (npm start)', load: () => import('./demo.ts') },
  { name: 'inspect', summary: 'import an n,k (or ε1,ε2) table and report what was read', load: () => import('./inspect.ts') },
  { name: 'eval', summary: 'n and k at given wavelengths, from a table or a registry version', load: () => import('./eval.ts') },
  { name: 'convert', summary: 'rewrite a table in any accepted dialect as clean CSV or JSON', load: () => import('./convert.ts') },
  { name: 'fit', summary: 'fit a dispersion model to an n,k table (or compare several by AIC/BIC)', load: () => import('./fit.ts') },
  { name: 'kk', summary: 'Kramers-Kronig consistency of an n,k table (exit 3 if inconsistent)', load: () => import('./kk.ts') },
  { name: 'serve', summary: 'serve the registry over HTTP (pages at /, API under /api/v1)', load: () => import('./serve.ts') },
  { name: 'token', summary: 'create, list and revoke bearer tokens for the HTTP API', load: () => import('./token.ts') },
  { name: 'settings', summary: 'show and change the registry and API settings', load: () => import('./settings.ts') },
  {
    name: 'login',
    summary: 'save your token for an nkledger server (server mode: --server URL or NKLEDGER_SERVER)',
    load: () => import('./login.ts'),
  },
  { name: 'logout', summary: 'forget the saved token of an nkledger server', load: () => import('./logout.ts') },
  { name: 'material', summary: 'create and edit materials in the registry', load: () => import('./material.ts') },
  { name: 'import', summary: 'store a measured table as a new draft version of a material', load: () => import('./import.ts') },
  { name: 'show', summary: 'show a version: status, hash, content, provenance, fit, KK verdict', load: () => import('./show.ts') },
  { name: 'list', summary: 'list the materials in the registry', load: () => import('./list.ts') },
  { name: 'history', summary: "a material's versions and its audit log", load: () => import('./history.ts') },
  {
    name: 'approve',
    summary: 'approve a draft version (someone other than its creator, unless self-approval is on)',
    load: () => import('./approve.ts'),
  },
  {
    name: 'review',
    summary: 'drafts you may approve, with KK verdict, fit convergence, warnings and strong correlations',
    load: () => import('./review.ts'),
  },
  { name: 'retire', summary: 'retire an approved version: pins keep resolving, with a warning', load: () => import('./retire.ts') },
  { name: 'withdraw', summary: 'withdraw a draft nobody should use (its number is never reused)', load: () => import('./withdraw.ts') },
  { name: 'lock', summary: "a design's lockfile: pin, verify and check for newer versions", load: () => import('./lock.ts') },
  { name: 'verify', summary: 'recompute every hash and check the registry (exit 3 on any problem)', load: () => import('./verify.ts') },
  { name: 'backup', summary: 'copy the registry to a new file while it stays in use', load: () => import('./backup.ts') },
  {
    name: 'registry',
    summary: 'copy a whole registry into an empty one, SQLite or PostgreSQL, re-verifying every hash',
    load: () => import('./registry.ts'),
  },
  { name: 'diff', summary: 'compare two versions: parameters, largest |Δn| and |Δk|, provenance', load: () => import('./diff.ts') },
  { name: 'export', summary: 'export a version as CSV or JSON', load: () => import('./export.ts') },
  {
    name: 'ellipsometry',
    summary: 'fit layer thicknesses and dispersion models to measured Ψ/Δ; --store keeps the film',
    load: () => import('./ellipsometry.ts'),
  },
  { name: 'stack', summary: 'R, T, A, Ψ/Δ and colour of a thin-film stack design from pinned materials', load: () => import('./stack.ts') },
];

export function findCommand(name: string | undefined): CommandEntry | undefined {
  return COMMANDS.find((c) => c.name === name);
}

const preloaded = new Map<string, CommandModule>();

/**
 * A command module already loaded, to be used instead of its entry's `load`: each per-command bundle of the
 * build (scripts/build.js) holds its one command this way, so that it never imports another file.
 */
export function preloadCommand(name: string, module: CommandModule): void {
  preloaded.set(name, module);
}

/** The module of `entry`: the preloaded one that registers its command, else loaded by `entry.load`. */
export async function loadCommand(entry: CommandEntry): Promise<CommandModule> {
  return preloaded.get(entry.name) ?? entry.load();
}
