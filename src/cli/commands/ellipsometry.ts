/**
 * `nkledger ellipsometry fit DATA --sample SAMPLE.json`: layer thicknesses and dispersion parameters fitted to
 * measured Ψ/Δ at several angles, optionally kept as a new draft version (--store MATERIAL).
 */
import { writeFile } from 'node:fs/promises';
import type { Command } from 'commander';
import { importOptionsFrom, type ImportFlags } from '../../io/import-options.ts';
import { parseOptionNumber } from '../../io/numbers.ts';
import {
  DEFAULT_SIGMA_DELTA_DEG,
  DEFAULT_SIGMA_PSI_DEG,
  DEFAULT_STARTS,
  type EllipsometryAnswer,
  type EllipsometryProgress,
  fitEllipsometry,
  MAX_STARTS,
  runEllipsometryRequest,
  storeFittedFilm,
} from '../../service/ellipsometry.ts';
import { renderEllipsometryPlot } from '../../service/ellipsometry-plot.ts';
import { readSource } from '../../service/source.ts';
import { actorFrom, addAsOption } from '../admin-options.ts';
import { withRegistry } from '../file-registry.ts';
import { addRegistryOptions, registryOps, serverUrlOf, type RegistryFlags } from '../registry-access.ts';
import { InputError } from '../../errors.ts';
import { guarded } from '../failure.ts';
import { addImportOptions, cliOptionName } from '../import-options.ts';
import { cliIo } from '../io.ts';
import { formatTable, printJson, printLines, printWarnings } from '../output.ts';

interface EllipsometryFlags extends ImportFlags, RegistryFlags {
  sample: string;
  json?: boolean;
  plot?: string;
  starts?: string;
  store?: string;
  extrapolate?: boolean;
  db?: string;
  as?: string;
}

export function register(program: Command): void {
  const group = program
    .command('ellipsometry')
    .description('fit layer thicknesses and dispersion models to measured ellipsometric Ψ/Δ (subcommand: fit)');
  const fit = group
    .command('fit')
    .description(
      'weighted least squares on measured Ψ and Δ at several angles: the free parameters of a sample description (a stack design whose layers list "fit"), ± 1σ, correlations and goodness of fit',
    )
    .argument(
      '<data>',
      'Ψ/Δ file: wavelength or photon energy, angle, Ψ, Δ (± σΨ, σΔ) per row, or psi_65, delta_65, … per angle; - for standard input',
    )
    .requiredOption('--sample <file.json>', 'sample description: a stack design (schemas/stack-design.schema.json) with "fit" lists per layer')
    .option('--starts <N>', `thickness starts spread across one interference period of the film (default ${DEFAULT_STARTS})`)
    .option('--json', 'print {"parameters", "statistics", "correlations", "warnings", "materials", …} as JSON')
    .option('--plot <file.svg>', 'write an SVG of measured (points) and modelled (lines) Ψ and Δ per angle')
    .option('--store <material>', 'keep the fitted film as a new draft version of MATERIAL (its model, and n,k on the measured grid marked derived)')
    .option('--extrapolate', 'evaluate model sources outside their validity range (tables are never extrapolated)');
  addAsOption(addRegistryOptions(addImportOptions(fit), "registry database for the sample's refs and for --store"))
    .addHelpText(
      'after',
      `\nWeights: 1/σ² from the file's σ columns, else σΨ = ${DEFAULT_SIGMA_PSI_DEG}° and σΔ = ${DEFAULT_SIGMA_DELTA_DEG}°. Δ residuals are taken modulo 360°.\n` +
        'Ψ, Δ: Azzam & Bashara convention (N = n − ik). A fit is not a certification: see docs/ellipsometry.md.\n\n' +
        'Example:\n  nkledger ellipsometry fit data/marrowick/sinx-on-si.psi-delta.txt --sample data/marrowick/sinx-on-si.sample.json',
    )
    .action(
      guarded(async (dataPath: string, opts: EllipsometryFlags) => {
        const starts =
          opts.starts === undefined ? DEFAULT_STARTS : parseOptionNumber(opts.starts, '--starts', { integer: true, min: 1, max: MAX_STARTS });
        const data = await readSource(dataPath, {}, dataPath === '-' ? cliIo().stdin : undefined);
        const sampleSource = await readSource(opts.sample, { maxBytes: 8 * 1024 * 1024 });
        const sampleText = Buffer.from(sampleSource.bytes).toString('utf8');
        // In server mode the sample's registry refs are fetched from the server; the fit runs here.
        const server = serverUrlOf(opts) !== undefined;
        if (server && opts.store)
          throw new InputError(
            'server-mode-store',
            '--store is not available in server mode yet (the server would have to repeat the fit to trust it): store with --db on the registry file, or import the fitted n,k with nkledger import',
            {},
            { option: 'store' },
          );
        // The fit's own time (reading the data and resolving the sample not included), and its progress line.
        let started = 0;
        let progress: ReturnType<typeof progressLine> = { update: undefined, clear: () => {} };
        let run: Awaited<ReturnType<typeof runEllipsometryRequest>>;
        try {
          run = await runEllipsometryRequest(
            {
              data: { bytes: data.bytes, file: data.file, importOptions: importOptionsFrom(opts, cliOptionName) },
              sample: { text: sampleText, file: sampleSource.file },
              resolve: { db: opts.db, allowFiles: true, ...(server && { loadVersion: registryOps(opts).loadVersion }) },
              options: { starts, extrapolate: opts.extrapolate ?? false },
            },
            (sample, fitData, options) => {
              started = performance.now();
              progress = progressLine(started);
              return fitEllipsometry(sample, fitData, options, progress.update);
            },
          );
        } finally {
          progress.clear();
        }
        const { prepared, report, answer } = run;
        const seconds = (performance.now() - started) / 1000;
        printWarnings(answer.import_warnings);
        if (opts.plot)
          await writeFile(opts.plot, renderEllipsometryPlot(report, `${data.file}: ${prepared.sample.design.name ?? sampleSource.file}`));
        let stored: string | null = null;
        if (opts.store) {
          const slug = opts.store;
          stored = (await withRegistry(opts, (r) => storeFittedFilm(r, { slug, prepared, report }, actorFrom(opts)))).ref;
        }
        if (opts.json) return printJson(stored ? { ...answer, stored } : answer);
        printLines(textReport(answer, seconds, opts.plot, stored));
      }),
    );
}

/**
 * Progress of a fit that has run longer than a second, on one line of standard error, only when that is a terminal
 * (a log file or a pipe gets nothing). The fit is synchronous, so the line is written from its own callbacks.
 */
function progressLine(started: number): { update: EllipsometryProgress | undefined; clear: () => void } {
  const stderr = cliIo().stderr as { write(text: string): unknown; isTTY?: boolean };
  if (stderr.isTTY !== true) return { update: undefined, clear: () => {} };
  let shown = false;
  return {
    update: (step) => {
      const elapsed = (performance.now() - started) / 1000;
      if (elapsed < 1) return;
      const where = step.phase === 'screening' ? `screening thickness start ${step.done + 1} of ${step.total}` : 'full fit';
      stderr.write(`\r\x1b[Kellipsometry fit: ${where}, ${step.evaluations} model evaluations, ${elapsed.toFixed(1)} s`);
      shown = true;
    },
    clear: () => {
      if (shown) stderr.write('\r\x1b[K');
    },
  };
}

const fmt = (v: number | null, digits = 5) => (v === null ? '—' : Math.abs(v) >= 1e-3 || v === 0 ? v.toPrecision(digits) : v.toExponential(2));

function textReport(a: EllipsometryAnswer, seconds: number, plot: string | undefined, stored: string | null): string[] {
  const lines = [
    `${a.data.file}: ${a.data.points} points at ${a.data.angles_deg.join(', ')}°, ${a.data.wavelength_range_nm[0]}–${a.data.wavelength_range_nm[1]} nm`,
  ];
  const roleWidth = Math.max(10, ...a.materials.map((m) => m.role.length)); // mixture parts have long roles
  for (const m of a.materials)
    lines.push(`  ${m.role.padEnd(roleWidth)} ${m.describe}${m.ref ? `, ${m.ref}` : ''}${m.sha256 ? ` sha256:${m.sha256.slice(0, 12)}…` : ''}`);
  lines.push('', 'fitted parameters (± 1σ):');
  const anyAtBound = Object.values(a.parameters).some((p) => p.at_bound);
  lines.push(
    ...formatTable(
      ['parameter', 'value', '± 1σ', 'unit', ...(anyAtBound ? [''] : [])],
      Object.entries(a.parameters).map(([name, p]) => [
        name,
        fmt(p.value, 6),
        fmt(p.stderr, 2),
        p.unit,
        ...(anyAtBound ? [p.at_bound ? 'at bound' : ''] : []),
      ]),
    ),
  );
  const s = a.statistics;
  lines.push(
    '',
    `rms Ψ ${s.rms_psi_deg.toFixed(4)}°, rms Δ ${s.rms_delta_deg.toFixed(4)}°, reduced χ² ${s.reduced_chi2.toPrecision(3)} (${s.points} residuals, ${s.dof} degrees of freedom), ${s.iterations} iterations${s.converged ? '' : ' (not converged)'}`,
  );
  const w = a.weights;
  lines.push(
    `weights: σΨ ${w.sigma_psi_deg === 'file' ? 'from the file' : `${w.sigma_psi_deg}° (default)`}, σΔ ${w.sigma_delta_deg === 'file' ? 'from the file' : `${w.sigma_delta_deg}° (default)`}`,
  );
  if (a.multistart.parameter && a.multistart.screened.length > 1) {
    const ends = a.multistart.screened.map((r) => `${r.start.toFixed(1)}→${r.value === null ? '—' : r.value.toFixed(2)}`).join(', ');
    lines.push(
      `${a.multistart.screened.length} starts of ${a.multistart.parameter} across one interference period (${a.multistart.period_nm!.toFixed(1)} nm), screened with the other parameters fixed: ${ends} nm; full fit from ${a.multistart.best_start!.toFixed(1)} nm`,
    );
  }
  lines.push(`fit time ${seconds.toFixed(2)} s`);
  if (a.correlations.high.length) {
    lines.push('strong correlations:', ...a.correlations.high.map((h) => `  ${h.a} ~ ${h.b}: r = ${h.r.toFixed(3)}`));
  }
  for (const warning of a.warnings) lines.push(`warning: ${warning.message} [${warning.rule}]`);
  if (plot) lines.push(`plot written to ${plot}`);
  if (stored) lines.push(`stored the fitted film as ${stored} (draft; its n,k table is derived from the model)`);
  return lines;
}
