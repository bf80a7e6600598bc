/**
 * SOURCE for the commands that read n,k (inspect, eval, fit, kk): a file, "-" for standard input, or a registry
 * version. One argument description, one set of flags (the input flags and --db) and one loader for all of them.
 */
import type { Command } from 'commander';
import { isRegistrySource } from '../service/source.ts';
import { ignoredFlagsNotice, loadTableOrVersion, type LoadedSource } from '../service/table-source.ts';
import { addRegistryOptions, registryOps, serverUrlOf, type RegistryFlags } from './registry-access.ts';
import { cliIo } from './io.ts';
import { importOptionsFrom, type ImportFlags } from '../io/import-options.ts';
import { addImportOptions, cliOptionName } from './import-options.ts';
import { printResolution } from './registry-output.ts';

export const SOURCE_ARGUMENT_HELP =
  'table file, - for standard input, or a registry version: slug@N, slug@sha256:PREFIX, or a bare slug (its latest approved version)';

export interface SourceFlags extends ImportFlags, RegistryFlags {}

/** The input flags of a file, and --db or --server for a registry version. */
export function addSourceOptions(cmd: Command): Command {
  return addRegistryOptions(addImportOptions(cmd), 'registry database for a version reference');
}

/**
 * Load SOURCE and print its notices (a bare slug is not a pin) and, unless the command reports them itself,
 * its warnings (import warnings; retired, withdrawn or draft status) to stderr.
 */
export async function loadSource(source: string, opts: SourceFlags, { printWarnings = true } = {}): Promise<LoadedSource> {
  const importOptions = importOptionsFrom(opts, cliOptionName);
  let loaded: LoadedSource;
  // In server mode a registry version is fetched from the server and computed on here; files stay local.
  if (isRegistrySource(source) && serverUrlOf(opts) !== undefined) {
    loaded = await registryOps(opts).loadVersion(source);
    loaded.notices.push(...ignoredFlagsNotice(loaded, importOptions, source));
  } else loaded = await loadTableOrVersion(source, { db: opts.db, importOptions, stdin: cliIo().stdin });
  printResolution({ notices: loaded.notices, warnings: printWarnings ? loaded.warnings : [] });
  return loaded;
}

/** How reports name the source: the pin a registry reference resolved to, else the file name as given. */
export function sourceLabel(source: string, loaded: LoadedSource): string {
  return loaded.detected.source === 'registry' ? loaded.detected.ref : source;
}
