/**
 * The fit flags shared by `nkledger fit` and `nkledger import --fit`, from the one table of fit options
 * (FIT_OPTIONS, service/fit-options.ts); the parsed flags (a FitOptionText) become FitOptions through the
 * service layer's parseFitOptions, which the HTTP API's fit fields go through too.
 */
import type { Command } from 'commander';
import { FIT_OPTIONS } from '../service/fit-options.ts';
import { addOptionTable } from './option-table.ts';

export function addFitOptions(cmd: Command): Command {
  return addOptionTable(cmd, FIT_OPTIONS);
}
