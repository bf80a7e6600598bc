/**
 * `nkledger kk SOURCE`: is this n consistent with this k (Kramers-Kronig)? Prints the verdict, the misfit
 * in n and where it peaks, a per-band breakdown; --json the full report; --plot an SVG of n and Δn.
 * Exit code: 0 consistent or uninformative, 3 inconsistent (so scripts can gate on it), 2 bad input.
 */
import { writeFile } from 'node:fs/promises';
import type { Command } from 'commander';
import { parseOptionNumber } from '../../io/numbers.ts';
import { checkKramersKronig, KK_DEFAULTS, type KkReport } from '../../kk/check.ts';
import { kkPlotSpec } from '../../kk/plot-spec.ts';
import { renderSpectrumPlot } from '../../plot/spectrum-plot.ts';
import { requireTable } from '../../service/table-source.ts';
import { noKColumnReport } from '../../service/absent-k.ts';
import { InputError } from '../../errors.ts';
import { guarded } from '../failure.ts';
import { setExitCode } from '../io.ts';
import { formatTable, printJson, printLines } from '../output.ts';
import { addSourceOptions, loadSource, SOURCE_ARGUMENT_HELP, sourceLabel, type SourceFlags } from '../source-options.ts';

/** Exit code for an `inconsistent` verdict: distinct from 1 (internal fault) and 2 (bad input). */
export const KK_INCONSISTENT_EXIT_CODE = 3;

const e = (v: number) => v.toExponential(1);
const nm = (v: number) => `${+v.toFixed(1)} nm`;

/** Lines a person reads at a glance. */
export function kkLines(source: string, r: KkReport): string[] {
  const lines = [
    `${source}: ${r.verdict.toUpperCase()}`,
    `  ${r.summary}`,
    `  Δn (measured − KK-reconstructed): rms ${e(r.rms_dn)}, max ${e(r.max_dn)} at ${nm(r.worst_nm)}; ` +
      `systematic max ${e(r.systematic_max_dn)} at ${nm(r.systematic_worst_nm)}; point-to-point noise ${e(r.noise_dn)}`,
    `  ε2 moved: rms ${e(r.rms_deps2)}, max ${e(r.max_deps2)} at ${nm(r.max_deps2_nm)} (k by up to ${e(r.max_dk)})`,
    `  tolerance ${r.tolerance} in n; ${r.points} points, ${nm(r.range_nm[0]).replace(/ nm$/, '')}–${nm(r.range_nm[1])}`,
    '',
    ...formatTable(
      ['band', 'range (nm)', 'points', 'rms Δn', 'max |Δn|', 'at (nm)', 'systematic'],
      r.bands.map((b) => [
        b.band,
        `${+b.range_nm[0].toFixed(1)}–${+b.range_nm[1].toFixed(1)}`,
        String(b.points),
        e(b.rms_dn),
        e(b.max_dn),
        String(+b.worst_nm.toFixed(1)),
        e(b.systematic_max_dn),
      ]),
    ).map((l) => `  ${l}`),
    '',
    ...r.notes.map((n) => `  note: ${n}`),
    `  method: ${r.method.name}; ${r.method.basis_functions} basis functions, knot spacing ${r.method.knot_spacing_ev.toFixed(3)} eV (see DEVELOPERS.md)`,
  ];
  return lines;
}

export function register(program: Command): void {
  addSourceOptions(
    program
      .command('kk')
      .description('Kramers-Kronig consistency of a measured n,k table: is n what k implies? (exit 0 consistent/uninformative, 3 inconsistent)')
      .argument('<source>', SOURCE_ARGUMENT_HELP)
      .option('--tolerance <dn>', `largest acceptable systematic misfit in n (default ${KK_DEFAULTS.tolerance})`)
      .option('--json', 'print the full report as JSON ({"verdict", "rms_dn", "max_dn", "worst_nm", "tolerance", ...})')
      .option('--plot <file.svg>', 'write an SVG: measured vs KK-reconstructed n, and Δn'),
  )
    .addHelpText(
      'after',
      '\nExamples:\n  nkledger kk data/marrowick/ito-sputtered.tsv\n  nkledger kk film.csv --tolerance 0.002 --json --plot film-kk.svg\n  nkledger kk sin-pecvd-a@3',
    )
    .action(
      guarded(async (source: string, opts: SourceFlags & { tolerance?: string; json?: boolean; plot?: string }) => {
        const tolerance =
          opts.tolerance === undefined
            ? undefined
            : parseOptionNumber(opts.tolerance, '--tolerance', { above: 0, hint: 'a misfit in n, e.g. 0.005' });
        const loaded = await loadSource(source, opts);
        const label = sourceLabel(source, loaded);
        const table = requireTable(loaded, 'check');
        if (loaded.kAbsent) {
          // k = 0 stored for a file without a k column is not a measurement: nothing to check n against.
          const answer = noKColumnReport(table);
          if (opts.plot) throw new InputError('no-k-column', `${label} has no k column: there is no KK check to plot`, {}, { option: 'plot' });
          if (opts.json) printJson(answer);
          else printLines([`${label}: UNINFORMATIVE (${answer.reason})`, `  ${answer.summary}`]);
          return;
        }
        const report = checkKramersKronig(table, { tolerance });
        if (opts.plot) await writeFile(opts.plot, renderSpectrumPlot(kkPlotSpec(report, `Kramers-Kronig check of ${label}`)));
        if (opts.json) printJson(report);
        else printLines(kkLines(label, report));
        if (report.verdict === 'inconsistent') setExitCode(KK_INCONSISTENT_EXIT_CODE);
      }),
    );
}
