/**
 * `nkledger fit SOURCE --model NAME[+NAME]` and `nkledger fit SOURCE --compare a,b,c`: fit dispersion
 * models to a measured table and print parameters with standard errors, goodness of fit and warnings.
 */
import { writeFile } from 'node:fs/promises';
import { Option, type Command } from 'commander';
import { InputError } from '../../errors.ts';
import { compareModels, type ComparisonReport } from '../../fit/compare.ts';
import { fitTable } from '../../fit/fit.ts';
import { fitPlotSpec } from '../../fit/fit-plot.ts';
import type { FitOptions, FitReport, FitTarget } from '../../fit/types.ts';
import { buildModel, MODEL_CATALOGUE } from '../../models/catalogue.ts';
import { renderSpectrumPlot } from '../../plot/spectrum-plot.ts';
import { requireTable } from '../../service/table-source.ts';
import { guarded } from '../failure.ts';
import { formatTable, printJson, printLines, printWarnings } from '../output.ts';
import { addSourceOptions, loadSource, SOURCE_ARGUMENT_HELP, sourceLabel, type SourceFlags } from '../source-options.ts';

interface FitFlags extends SourceFlags {
  model?: string;
  compare?: string;
  terms?: string;
  urbach?: boolean;
  target?: string;
  range?: string;
  fix?: string[];
  init?: string[];
  bounds?: string[];
  free?: string[];
  starts?: string;
  seed?: string;
  json?: boolean;
  plot?: string;
}

const TARGETS: FitTarget[] = ['nk', 'n', 'k', 'eps'];
const collect = (value: string, previous: string[] = []) => [...previous, value];
const g = (v: number | null, digits = 6) => (v === null ? '—' : String(+v.toPrecision(digits)));

function number(text: string, what: string): number {
  const v = Number(text);
  if (text.trim() === '' || !Number.isFinite(v)) throw new InputError('bad-option', `${what}: "${text}" is not a number`);
  return v;
}

/** "P=V" → [P, V] */
function assignment(text: string, flag: string): [string, string] {
  const at = text.indexOf('=');
  if (at <= 0) throw new InputError('bad-option', `${flag} ${text}: expected NAME=VALUE`);
  return [text.slice(0, at).trim(), text.slice(at + 1).trim()];
}

/** "LO:HI" → [lo, hi] */
function interval(text: string, flag: string): [number, number] {
  const parts = text.split(':');
  if (parts.length !== 2) throw new InputError('bad-option', `${flag} ${text}: expected MIN:MAX`);
  const [lo, hi] = parts.map((p) => number(p, flag));
  if (!(lo < hi)) throw new InputError('bad-option', `${flag} ${text}: MIN must be below MAX`);
  return [lo, hi];
}

function fitOptionsFrom(opts: FitFlags): Omit<FitOptions, 'model'> {
  const out: Omit<FitOptions, 'model'> = {};
  if (opts.terms !== undefined) out.terms = number(opts.terms, '--terms');
  if (opts.urbach) out.urbach = true;
  if (opts.target !== undefined) {
    if (!TARGETS.includes(opts.target as FitTarget)) throw new InputError('bad-option', `--target ${opts.target}: expected one of ${TARGETS.join(', ')}`);
    out.target = opts.target as FitTarget;
  }
  if (opts.range !== undefined) out.rangeNm = interval(opts.range, '--range');
  if (opts.fix?.length) out.fix = Object.fromEntries(opts.fix.map((t) => assignment(t, '--fix')).map(([k, v]) => [k, number(v, `--fix ${k}`)]));
  if (opts.init?.length) out.init = Object.fromEntries(opts.init.map((t) => assignment(t, '--init')).map(([k, v]) => [k, number(v, `--init ${k}`)]));
  if (opts.bounds?.length) out.bounds = Object.fromEntries(opts.bounds.map((t) => assignment(t, '--bounds')).map(([k, v]) => [k, interval(v, `--bounds ${k}`)]));
  if (opts.free?.length) out.free = opts.free;
  if (opts.starts !== undefined) {
    const s = number(opts.starts, '--starts');
    if (!Number.isInteger(s) || s < 1 || s > 1000) throw new InputError('bad-option', `--starts ${opts.starts}: expected an integer 1–1000`);
    out.starts = s;
  }
  if (opts.seed !== undefined) out.seed = number(opts.seed, '--seed');
  return out;
}

const TARGET_TEXT: Record<FitTarget, string> = { nk: 'n and k', n: 'n only', k: 'k only', eps: 'ε1 and ε2' };

/** The report as a person reads it. */
export function fitLines(source: string, r: FitReport): string[] {
  const s = r.statistics;
  const lines = [
    `${r.model} fit of ${source}: ${g(r.range_nm[0])}–${g(r.range_nm[1])} nm, ${TARGET_TEXT[r.options.target]}, ${s.points} residuals, ` +
      (r.options.weighted ? 'weighted by the sigma columns' : 'no sigma columns (k weighted by the n/k noise ratio estimated from the data)'),
    '',
    ...formatTable(
      ['parameter', 'value', '± 1σ', 'unit', 'note'],
      Object.entries(r.parameters).map(([name, p]) => [
        name,
        g(p.value),
        p.stderr === null ? '' : g(p.stderr, 2),
        p.unit === '1' ? '' : p.unit,
        p.stderr === null ? 'fixed' : p.at_bound ? 'AT BOUND' : '',
      ]),
    ),
    '',
    `rms n ${g(s.rms_n, 3)}   rms k ${g(s.rms_k, 3)}   reduced χ² ${s.reduced_chi2 === null ? '— (no sigmas)' : g(s.reduced_chi2, 4)}   AIC ${g(s.aic, 6)}   BIC ${g(s.bic, 6)}   iterations ${s.iterations}`,
    `Kramers-Kronig consistent: ${r.kk_consistent ? 'yes' : 'NO'}`,
  ];
  if (r.multistart) lines.push(`multi-start: ${r.multistart.reached_best} of ${r.multistart.starts} starts reached the best minimum (${r.multistart.tolerance})`);
  if (r.correlations.high.length) lines.push(`correlated pairs (|r| > ${r.correlations.threshold}): ${r.correlations.high.map((h) => `${h.a}/${h.b} ${h.r.toFixed(3)}`).join(', ')}`);
  return lines;
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
  const lines = [`model comparison on ${source} (lower AIC/BIC is better; Δ relative to the best)`, '', ...formatTable(['model', 'free', 'rms n', 'rms k', 'AIC', 'ΔAIC', 'BIC', 'ΔBIC', 'KK'], rows), ''];
  lines.push(`best by AIC: ${c.best_aic ?? '—'}; best by BIC: ${c.best_bic ?? '—'}`, '', 'caveats beside these numbers:');
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
    const flags = [term.terms ? `--terms ${term.terms.min}–${term.terms.max}: ${term.terms.meaning}` : '', term.urbach ? `--urbach: ${term.urbach.meaning}` : ''].filter(Boolean);
    lines.push(`  ${term.name}  ${term.summary}`);
    lines.push(`    Kramers-Kronig consistent: ${term.kkConsistent ? 'yes' : 'NO'}; ${term.summable ? 'summable' : 'stands alone'}${flags.length ? `; ${flags.join('; ')}` : ''}`);
    const model = buildModel(term.name, { terms: 1, urbach: term.urbach ? true : undefined });
    for (const p of model.parameters) {
      lines.push(`    ${p.name.padEnd(8)} [${p.unit}] ${p.meaning}; bounds ${p.bounds[0]}:${p.bounds[1]}${p.fixedByDefault ? '; fixed unless --free' : ''}`);
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
    program
      .command('fit')
      .description('fit a dispersion model to a measured n,k table (or compare several by AIC/BIC)')
      .argument('<source>', SOURCE_ARGUMENT_HELP)
      .option('--model <spec>', 'model name, or a sum such as tauc-lorentz+drude')
      .option('--compare <specs>', 'comma-separated models to fit and rank by AIC and BIC')
      .option('--terms <N>', 'number of Sellmeier terms / oscillators for models that accept it')
      .option('--urbach', 'Cauchy: add the Urbach absorption tail')
      .addOption(new Option('--target <what>', 'quantities fitted').choices(TARGETS).default('nk'))
      .option('--range <min:max>', 'fit only wavelengths in this window (nm)')
      .option('--fix <P=V>', 'hold parameter P fixed at V (repeatable)', collect)
      .option('--init <P=V>', 'start parameter P at V instead of the automatic guess (repeatable)', collect)
      .option('--bounds <P=LO:HI>', 'bounds of parameter P (repeatable)', collect)
      .option('--free <P>', 'fit a parameter the model fixes by default (Sellmeier A, Urbach Eb) (repeatable)', collect)
      .option('--starts <N>', 'number of starts: the automatic guess plus N − 1 random perturbations of it', '1')
      .option('--seed <N>', 'seed of the multi-start perturbations', '1')
      .option('--json', 'print the report as JSON')
      .option('--plot <file.svg>', 'write an SVG of measured and fitted n, k and the residuals'),
  )
    .addHelpText('after', catalogueHelp())
    .action(
      guarded(async (source: string, opts: FitFlags) => {
        if ((opts.model === undefined) === (opts.compare === undefined)) {
          throw new InputError('bad-option', `give exactly one of --model NAME or --compare A,B,...; models: ${MODEL_CATALOGUE.map((t) => t.name).join(', ')}`);
        }
        const options = fitOptionsFrom(opts);
        const loaded = await loadSource(source, opts);
        const table = requireTable(loaded, 'fit');
        const label = sourceLabel(source, loaded);
        if (opts.compare !== undefined) {
          if (opts.plot) throw new InputError('bad-option', '--plot draws one fit; use it with --model');
          const comparison = compareModels(table, opts.compare.split(',').map((s) => s.trim()).filter(Boolean), options);
          if (opts.json) printJson(comparison);
          else printLines(compareLines(label, comparison));
          return;
        }
        const report = fitTable(table, { ...options, model: opts.model as string });
        if (opts.plot) await writeFile(opts.plot, renderSpectrumPlot(fitPlotSpec(table, report, `${report.model} fit of ${label}`)));
        if (opts.json) printJson(report);
        else {
          printLines(fitLines(label, report));
          printWarnings(report.warnings);
          for (const note of buildModel(report.model, report.options).notes) process.stderr.write(`note: ${note}\n`);
        }
      }),
    );
}
