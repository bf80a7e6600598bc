/**
 * `nkledger fit SOURCE --model NAME[+NAME]` and `nkledger fit SOURCE --compare a,b,c`: fit dispersion
 * models to a measured table and print parameters with standard errors, goodness of fit and warnings.
 */
import { writeFile } from 'node:fs/promises';
import type { Command } from 'commander';
import { InputError } from '../../errors.ts';
import { compareModels, type ComparisonReport } from '../../fit/compare.ts';
import { fitTable } from '../../fit/fit.ts';
import { fitOptionsForAbsentK, NO_K_COLUMN } from '../../service/absent-k.ts';
import { fitPlotSpec } from '../../fit/fit-plot.ts';
import type { FitDiagnostic, FitReport, FitTarget } from '../../fit/types.ts';
import { buildModel, MODEL_CATALOGUE } from '../../models/catalogue.ts';
import { renderSpectrumPlot } from '../../plot/spectrum-plot.ts';
import { parseFitOptions, type FitOptionText } from '../../service/fit-options.ts';
import { requireTable } from '../../service/table-source.ts';
import { addFitOptions } from '../fit-options.ts';
import { guarded } from '../failure.ts';
import { cliIo } from '../io.ts';
import { formatTable, printJson, printLines, printWarnings } from '../output.ts';
import { addSourceOptions, loadSource, SOURCE_ARGUMENT_HELP, sourceLabel, type SourceFlags } from '../source-options.ts';

interface FitFlags extends SourceFlags, FitOptionText {
  model?: string;
  compare?: string;
  json?: boolean;
  plot?: string;
}

const g = (v: number | null, digits = 6) => (v === null ? '—' : String(+v.toPrecision(digits)));

const TARGET_TEXT: Record<FitTarget, string> = { nk: 'n and k', n: 'n only', k: 'k only', eps: 'ε1 and ε2' };

/** The report as a person reads it. */
export function fitLines(source: string, r: FitReport): string[] {
  const s = r.statistics;
  const lines = [
    `${r.model} fit of ${source}: ${g(r.range_nm[0])}–${g(r.range_nm[1])} nm, ${TARGET_TEXT[r.options.target]}, ${s.points} residuals, ` +
      (r.options.weighted
        ? 'weighted by the sigma columns'
        : r.options.weights === 'relative'
          ? 'weighted relative to the values (σ ∝ |value|)'
          : 'no sigma columns (k weighted by the n/k noise ratio estimated from the data)'),
    '',
    ...formatTable(
      ['parameter', 'value', '± 1σ', 'unit', 'note'],
      Object.entries(r.parameters).map(([name, p]) => [
        name,
        g(p.value),
        p.stderr === null ? '' : g(p.stderr, 2),
        p.unit === '1' ? '' : p.unit,
        p.at_bound ? 'at bound' : p.stderr === null ? 'fixed' : '',
      ]),
    ),
    '',
    `rms n ${g(s.rms_n, 3)}   rms k ${g(s.rms_k, 3)}   reduced χ² ${s.reduced_chi2 === null ? '— (no sigmas)' : `${g(s.reduced_chi2, 4)} (p = ${s.chi2_p == null ? '—' : s.chi2_p.toPrecision(2)})`}   AIC ${g(s.aic, 6)}   BIC ${g(s.bic, 6)}   iterations ${s.iterations}`,
    `Kramers-Kronig consistent: ${r.kk_consistent ? 'yes' : 'NO'}`,
  ];
  if (r.multistart) {
    const skipped = r.multistart.skipped ? `; ${r.multistart.skipped} skipped: no start inside the model's domain or a model not finite there` : '';
    lines.push(
      `multi-start: ${r.multistart.reached_best} of ${r.multistart.starts} starts reached the best minimum (${r.multistart.tolerance})${skipped}`,
    );
  }
  if (r.correlations.high.length)
    lines.push(
      `correlated pairs (|r| > ${r.correlations.threshold}): ${r.correlations.high.map((h) => `${h.a}/${h.b} ${h.r.toFixed(3)}`).join(', ')}`,
    );
  return lines;
}

/** The flags a next step involves, by the option the core names in a diagnostic. */
const OPTION_FLAGS: Record<NonNullable<FitDiagnostic['option']>, string> = {
  fix: '--fix P=V',
  bounds: '--bounds P=LO:HI or --fix P=V',
  init: '--init P=V',
  terms: '--terms N or --fix P=V',
  range: '--range MIN:MAX',
  weights: '--weights relative',
  starts: '--init P=V or --starts N',
};

/** Warnings as the CLI words them: the core's message and advice, and the flags that carry the advice out. */
export function fitWarningLines(r: FitReport): string[] {
  if (!r.diagnostics) return r.warnings;
  return r.diagnostics.map((d) => (d.advice ? `${d.message}; ${d.advice}${d.option ? ` (${OPTION_FLAGS[d.option]})` : ''}` : d.message));
}

export function compareLines(source: string, c: ComparisonReport): string[] {
  const rows = c.models.map((m) => [
    m.model,
    m.free_parameters === null ? '—' : String(m.free_parameters),
    g(m.report?.statistics.rms_n ?? null, 3),
    g(m.report?.statistics.rms_k ?? null, 3),
    g(m.aic, 6),
    g(m.delta_aic, 3),
    g(m.bic, 6),
    g(m.delta_bic, 3),
    m.kk_consistent ? 'yes' : 'NO',
  ]);
  const lines = [
    `model comparison on ${source} (lower AIC/BIC is better; Δ relative to the best)`,
    '',
    ...formatTable(['model', 'free', 'rms n', 'rms k', 'AIC', 'ΔAIC', 'BIC', 'ΔBIC', 'KK'], rows),
    '',
  ];
  lines.push(
    `best by AIC: ${c.best_aic ?? '—'}; best by BIC: ${c.best_bic ?? '—'} (within ΔBIC < 2 the one with fewer parameters)`,
    '',
    'caveats beside these numbers:',
  );
  for (const m of c.models) {
    if (m.error) lines.push(`  ${m.model}: fit failed: ${m.error}`);
    for (const note of m.caveats) lines.push(`  ${m.model}: ${note}`);
  }
  for (const note of c.caveats) lines.push(`  ${note}`);
  return lines;
}

/** The catalogue as help text: every model, its parameters with units, meaning and default bounds. */
export function catalogueHelp(): string {
  const lines = ['', 'Models (sum summable ones in ε with "+", e.g. tauc-lorentz+drude; parameters are then prefixed, e.g. drude.Ep):'];
  for (const term of MODEL_CATALOGUE) {
    const flags = [
      term.terms ? `--terms ${term.terms.min}–${term.terms.max}: ${term.terms.meaning}` : '',
      term.urbach ? `--urbach: ${term.urbach.meaning}` : '',
    ].filter(Boolean);
    lines.push(`  ${term.name}  ${term.summary}`);
    lines.push(
      `    Kramers-Kronig consistent: ${term.kkConsistent ? 'yes' : 'NO'}; ${term.summable ? 'summable' : 'stands alone'}${flags.length ? `; ${flags.join('; ')}` : ''}`,
    );
    const model = buildModel(term.name, { terms: 1, urbach: term.urbach ? true : undefined });
    for (const p of model.parameters) {
      lines.push(
        `    ${p.name.padEnd(8)} [${p.unit}] ${p.meaning}; bounds ${p.bounds[0]}:${p.bounds[1]}${p.fixedByDefault ? '; fixed unless --free' : ''}`,
      );
    }
  }
  lines.push(
    '',
    'Examples:',
    '  nkledger fit data/marrowick/sinx-pecvd-recipe-a.csv --model tauc-lorentz --plot sinx.svg',
    '  nkledger fit data/marrowick/sio2-thermal.csv --model sellmeier --terms 3 --range 250:1700',
    '  nkledger fit data/marrowick/ito-sputtered.tsv --model tauc-lorentz+drude --starts 10 --json',
    '  nkledger fit data/marrowick/al2o3-ald.csv --model cauchy --urbach --fix Eb=4',
    '  nkledger fit data/marrowick/sinx-pecvd-recipe-b.csv --compare cauchy,sellmeier,tauc-lorentz',
  );
  return lines.join('\n');
}

export function register(program: Command): void {
  addSourceOptions(
    addFitOptions(
      program
        .command('fit')
        .description('fit a dispersion model to a measured n,k table (or compare several by AIC/BIC)')
        .argument('<source>', SOURCE_ARGUMENT_HELP)
        .option('--model <spec>', 'model name, or a sum such as tauc-lorentz+drude')
        .option('--compare <specs>', 'comma-separated models to fit and rank by AIC and BIC'),
    )
      .option('--json', 'print the report as JSON')
      .option('--plot <file.svg>', 'write an SVG of measured and fitted n, k and the residuals'),
  )
    .addHelpText('after', catalogueHelp())
    .action(
      guarded(async (source: string, opts: FitFlags) => {
        if ((opts.model === undefined) === (opts.compare === undefined)) {
          throw new InputError(
            'bad-option',
            `give exactly one of --model NAME or --compare A,B,...; models: ${MODEL_CATALOGUE.map((t) => t.name).join(', ')}`,
          );
        }
        const parsed = parseFitOptions(opts);
        const loaded = await loadSource(source, opts);
        const table = requireTable(loaded, 'fit');
        const label = sourceLabel(source, loaded);
        if (opts.compare !== undefined) {
          if (opts.plot) throw new InputError('bad-option', '--plot draws one fit; use it with --model');
          // Without a k column every model of the comparison is fitted to n only, so their AIC/BIC compare.
          const options = loaded.kAbsent && parsed.target === undefined ? { ...parsed, target: 'n' as const } : parsed;
          if (options !== parsed) cliIo().stderr.write(`note: ${NO_K_COLUMN}: every model is fitted to n only (k was not measured)\n`);
          const comparison = compareModels(
            table,
            opts.compare
              .split(',')
              .map((s) => s.trim())
              .filter(Boolean),
            options,
          );
          if (opts.json) printJson(comparison);
          else printLines(compareLines(label, comparison));
          return;
        }
        const { options, notices } = fitOptionsForAbsentK({ ...parsed, model: opts.model as string }, loaded.kAbsent);
        for (const notice of notices) cliIo().stderr.write(`note: ${notice}\n`);
        const report = fitTable(table, options);
        if (opts.plot) await writeFile(opts.plot, renderSpectrumPlot(fitPlotSpec(table, report, `${report.model} fit of ${label}`)));
        if (opts.json) printJson(notices.length ? { ...report, notices } : report);
        else {
          printLines(fitLines(label, report));
          printWarnings(fitWarningLines(report));
          for (const note of buildModel(report.model, report.options).notes) cliIo().stderr.write(`note: ${note}\n`);
        }
      }),
    );
}
