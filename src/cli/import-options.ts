/**
 * The input flags every command that reads a table shares (inspect, eval, convert, fit, kk, import), from the
 * one table of import options (io/import-options.ts). They override what the importer detects.
 */
import type { Command } from 'commander';
import { IMPORT_OPTIONS, type SpellOption } from '../io/import-options.ts';
import { flagSpelling } from '../io/option-spec.ts';
import { addOptionTable } from './option-table.ts';

/** CLI spelling of an import option: `--input-unit`. */
export const cliOptionName: SpellOption = flagSpelling;

export function addImportOptions(cmd: Command): Command {
  return addOptionTable(cmd, IMPORT_OPTIONS);
}
