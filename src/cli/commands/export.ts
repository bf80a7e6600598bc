/** `nkledger export REF --format csv|json`: a version's table (CSV) or its full record (JSON). */
import { writeFile } from 'node:fs/promises';
import type { Command } from 'commander';
import { Option } from 'commander';
import { SPECTRAL_UNITS, type SpectralUnit } from '../../optics/units.ts';
import { parseOptionNumber } from '../../io/numbers.ts';
import { DEFAULT_MODEL_STEP_NM, VERSION_EXPORT_FORMATS, type VersionExportFormat } from '../../service/export-version.ts';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import { guarded } from '../failure.ts';
import { cliIo } from '../io.ts';
import { printResolution } from '../registry-output.ts';

export function register(program: Command): void {
  addRegistryOptions(program.command('export'))
    .description('export a version: CSV of its measured table (a model-only version: the model on a grid), or JSON of the whole record')
    .argument('<ref>', 'slug@N, slug@sha256:PREFIX or bare slug')
    .addOption(new Option('--format <format>', 'csv or json').choices(VERSION_EXPORT_FORMATS).makeOptionMandatory())
    .addOption(new Option('--x-unit <unit>', 'unit of the CSV x column').choices(SPECTRAL_UNITS).default('nm'))
    .option('--step <nm>', `grid step for a model-only CSV (default ${DEFAULT_MODEL_STEP_NM} nm)`)
    .option('-o, --output <file>', 'write to this file instead of standard output')
    .addHelpText(
      'after',
      '\nThe CSV starts with # lines naming the pin and its SHA-256; it imports back unchanged.\n\nExample:\n  nkledger export sin-pecvd-a@3 --format csv -o sin-a-3.csv',
    )
    .action(
      guarded(async (ref: string, opts: RegistryFlags & { format: VersionExportFormat; xUnit: SpectralUnit; step?: string; output?: string }) => {
        const stepNm = opts.step === undefined ? undefined : parseOptionNumber(opts.step, '--step', { above: 0 });
        const out = await registryOps(opts).exportVersion(ref, opts.format, { xUnit: opts.xUnit, stepNm });
        printResolution(out);
        if (opts.output) await writeFile(opts.output, out.text);
        else cliIo().stdout.write(out.text);
      }),
    );
}
