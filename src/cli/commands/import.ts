/** `nkledger import FILE --material SLUG`: store a measured table (and optionally a fitted model) as a new draft. */
import type { Command } from 'commander';
import { parseMetaPairs } from '../../service/provenance.ts';
import { readSource, STDIN_SOURCE } from '../../service/source.ts';
import { addAsOption } from '../admin-options.ts';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import type { ImportFile } from '../../client/operations.ts';
import { InputError } from '../../errors.ts';
import { givenFitOptions, parseFitOptions, type FitOptionText } from '../../service/fit-options.ts';
import { guarded } from '../failure.ts';
import { cliIo } from '../io.ts';
import { addFitOptions } from '../fit-options.ts';
import { importOptionsFrom, type ImportFlags } from '../../io/import-options.ts';
import { addImportOptions, cliOptionName } from '../import-options.ts';
import { printJson, printLines, printWarnings } from '../output.ts';

interface ImportCliOptions extends ImportFlags, FitOptionText, RegistryFlags {
  material: string;
  note?: string;
  meta?: string[];
  kk: boolean;
  fit?: string;
  json?: boolean;
}

export function register(program: Command): void {
  const command = addAsOption(addRegistryOptions(program.command('import')))
    .description(
      'store measured n,k tables as new draft versions of a material, with provenance and a Kramers-Kronig report (several files: one draft each, all or none)',
    )
    .argument('<files...>', 'table files (instrument exports as they come), or - for standard input')
    .requiredOption('--material <slug>', 'the material (create it first with `nkledger material add`)')
    .option('--note <text>', 'free notes stored with the version')
    .option(
      '--meta <key=value...>',
      'provenance: sample, substrate, process (or recipe), instrument, method (spectroscopic-ellipsometry | spectrophotometry | prism-coupling | other), angles (degrees, e.g. 65,70,75), measured_on (YYYY-MM-DD), operator',
    )
    .option(
      '--fit <model>',
      'also fit this dispersion model (e.g. cauchy, sellmeier, tauc-lorentz, tauc-lorentz+drude) and store its report; the fit flags below are those of `nkledger fit`',
    );
  addImportOptions(
    addFitOptions(command)
      .option('--no-kk', 'do not run the Kramers-Kronig check (it runs by default and its report is stored)')
      .option('--json', 'print {"ref", "sha256", "status", "source_file", "preamble", "warnings"} as JSON (an array of them for several files)'),
  )
    .addHelpText(
      'after',
      '\nExamples:\n  nkledger import data/marrowick/sinx-pecvd-recipe-a.csv --material sin-pecvd-a --fit tauc-lorentz \\\n' +
        '    --meta instrument="MO-SE 640" method=spectroscopic-ellipsometry angles=65,70,75 measured_on=2024-04-18 --note "wafer 7, centre"\n' +
        '  nkledger import data/marrowick/sio2-thermal.csv --material sio2-thermal --fit sellmeier --terms 3 --range 250:1700 --fix A=1\n' +
        '  nkledger import run-07/wafer-*.csv --material sin-pecvd-a --meta instrument="MO-SE 640"\n\n' +
        'Lines above the header (sample, operator, angles as the instrument wrote them) are kept in the provenance\n' +
        'as the preamble; the stored file name and SHA-256 are those of the file as it came. See docs/import.md.',
    )
    .action(
      guarded(async (files: string[], opts: ImportCliOptions) => {
        const importOptions = importOptionsFrom(opts, cliOptionName);
        const provenance = parseMetaPairs(opts.meta ?? []);
        if (opts.note !== undefined) provenance.notes = opts.note;
        const fitFlags = givenFitOptions(opts);
        if (opts.fit === undefined && fitFlags.length)
          throw new InputError('bad-option', `${fitFlags.map((f) => `--${f}`).join(', ')} configure a fit: add --fit MODEL`);
        if (files.filter((f) => f === STDIN_SOURCE).length > 1) throw new InputError('bad-option', 'standard input (-) can be read once');
        if (opts.fit !== undefined) parseFitOptions(opts); // refuse a bad flag before any file is read or sent
        const inputs: ImportFile[] = [];
        for (const file of files) {
          const { bytes, file: name } = await readSource(file, importOptions, cliIo().stdin);
          inputs.push({ bytes, file: name });
        }
        const stored = await registryOps(opts).importMeasurements({
          slug: opts.material,
          files: inputs,
          importFlags: opts,
          fit: opts.fit === undefined ? undefined : { model: opts.fit, options: opts },
          kk: opts.kk,
          provenance,
        });
        const reports = stored.map((v, i) => ({
          ref: v.ref,
          sha256: v.sha256,
          status: v.status,
          source_file: inputs[i].file,
          preamble: v.preamble,
          warnings: [...v.import_warnings, ...v.warnings],
        }));
        for (const r of reports) printWarnings(stored.length > 1 ? r.warnings.map((w) => `${r.source_file}: ${w}`) : r.warnings);
        if (opts.json) return printJson(files.length === 1 ? reports[0] : reports);
        printLines([
          ...reports.map(
            (r) =>
              `stored ${r.ref} (${r.status}) sha256:${r.sha256}${stored.length > 1 ? ` from ${r.source_file}` : ''}` +
              (r.preamble.length
                ? `\n  kept ${r.preamble.length} preamble line(s) from above the header in the provenance (nkledger show ${r.ref})`
                : ''),
          ),
          `someone other than you approves ${stored.length > 1 ? 'each' : 'it'} with: nkledger approve ${stored.length > 1 ? 'REF' : stored[0].ref}`,
        ]);
      }),
    );
}
