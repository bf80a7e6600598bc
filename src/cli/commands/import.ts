/** `nkledger import FILE --material SLUG`: store a measured table (and optionally a fitted model) as a new draft. */
import type { Command } from 'commander';
import { importMeasurement } from '../../service/import-measurement.ts';
import { parseMetaPairs } from '../../service/provenance.ts';
import { readSource } from '../../service/source.ts';
import { actorFrom, addAsOption, addDbOption, withRegistry } from '../admin-options.ts';
import { InputError } from '../../errors.ts';
import { guarded } from '../failure.ts';
import { addImportOptions, importOptionsFrom, type ImportFlags } from '../import-options.ts';
import { printJson, printLines, printWarnings } from '../output.ts';

interface ImportCliOptions extends ImportFlags {
  db?: string;
  as?: string;
  material: string;
  note?: string;
  meta?: string[];
  kk: boolean;
  fit?: string;
  terms?: string;
  starts?: string;
  json?: boolean;
}

export function register(program: Command): void {
  addImportOptions(
    addAsOption(addDbOption(program.command('import')))
      .description('store a measured n,k table as a new draft version of a material, with provenance and a Kramers-Kronig report')
      .argument('<file>', 'table file, or - for standard input')
      .requiredOption('--material <slug>', 'the material (create it first with `nkledger material add`)')
      .option('--note <text>', 'free notes stored with the version')
      .option(
        '--meta <key=value...>',
        'provenance: sample, substrate, process (or recipe), instrument, method (spectroscopic-ellipsometry | spectrophotometry | prism-coupling | other), angles (degrees, e.g. 65,70,75), measured_on (YYYY-MM-DD), operator',
      )
      .option('--fit <model>', 'also fit this dispersion model (e.g. cauchy, sellmeier, tauc-lorentz, tauc-lorentz+drude) and store its report')
      .option('--terms <n>', 'terms or oscillators of the fitted model (e.g. Sellmeier terms)')
      .option('--starts <n>', 'multi-start count for the fit (default 1)')
      .option('--no-kk', 'do not run the Kramers-Kronig check (it runs by default and its report is stored)')
      .option('--json', 'print {"ref", "sha256", "status", "warnings"} as JSON'),
  )
    .addHelpText(
      'after',
      '\nExample:\n  nkledger import data/marrowick/sinx-pecvd-recipe-a.csv --material sin-pecvd-a --fit tauc-lorentz \\\n' +
        '    --meta instrument="SE-2000" method=spectroscopic-ellipsometry angles=65,70,75 measured_on=2024-04-18 --note "wafer 7, centre"',
    )
    .action(
      guarded(async (file: string, opts: ImportCliOptions) => {
        const importOptions = importOptionsFrom(opts);
        const provenance = parseMetaPairs(opts.meta ?? []);
        if (opts.note !== undefined) provenance.notes = opts.note;
        const fit = opts.fit === undefined ? undefined : { model: opts.fit, terms: positiveInteger(opts.terms, '--terms'), starts: positiveInteger(opts.starts, '--starts') };
        const { bytes, file: name } = await readSource(file, importOptions);
        const stored = await withRegistry(opts, (r) =>
          importMeasurement(r, { slug: opts.material, bytes, file: name, importOptions, fit, kk: opts.kk, provenance }, actorFrom(opts)),
        );
        printWarnings([...stored.import_warnings, ...stored.warnings]);
        if (opts.json) return printJson({ ref: stored.ref, sha256: stored.sha256, status: stored.status, warnings: [...stored.import_warnings, ...stored.warnings] });
        printLines([`stored ${stored.ref} (${stored.status}) sha256:${stored.sha256}`, `someone other than you approves it with: nkledger approve ${stored.ref}`]);
      }),
    );
}

function positiveInteger(text: string | undefined, flag: string): number | undefined {
  if (text === undefined) return undefined;
  const value = Number(text);
  if (!Number.isInteger(value) || value < 1) throw new InputError('bad-option', `${flag} ${text}: expected a positive whole number`);
  return value;
}
