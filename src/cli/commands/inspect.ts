/** `nkledger inspect FILE`: what the importer read — points, range, units, columns, n and k ranges, warnings. */
import type { Command } from 'commander';
import type { InspectReport } from '../../service/inspect.ts';
import { inspectReport } from '../../service/inspect.ts';
import { requireTable } from '../../service/table-source.ts';
import { guarded } from '../failure.ts';
import { printJson, printLines } from '../output.ts';
import { addSourceOptions, loadSource, SOURCE_ARGUMENT_HELP, sourceLabel, type SourceFlags } from '../source-options.ts';

const g = (v: number) => String(+v.toPrecision(6));

/** Lines a person reads at a glance. */
export function inspectLines(source: string, r: InspectReport): string[] {
  const lines = [
    `${source}: ${r.points} points, ${g(r.range_nm[0])}–${g(r.range_nm[1])} nm`,
    ...(r.version
      ? [`  version   ${r.version.status}, sha256:${r.version.sha256}${r.version.model ? `, with a fitted ${r.version.model} model` : ''}`]
      : []),
    `  columns   ${r.columns.map((c, i) => (r.roles[i] === c ? c : `${c} → ${r.roles[i]}`)).join(', ')}`,
    `  x unit    ${r.x_unit}${r.quantity === 'eps' ? '; ε1, ε2 converted to n, k' : ''}`,
    `  n         ${g(r.n_range[0])} … ${g(r.n_range[1])}`,
    `  k         ${r.has_k ? `${g(r.k_range[0])} … ${g(r.k_range[1])}` : 'no k column (k = 0)'}${r.has_sigma ? '; with 1σ uncertainties' : ''}`,
  ];
  const d = r.dialect;
  if (d && r.data_lines) {
    const separator = d.delimiter === 'whitespace' ? 'whitespace' : d.delimiter === '\t' ? 'tab' : `'${d.delimiter}'`;
    lines.push(
      `  dialect   ${separator} separated${d.decimal_comma ? ', decimal comma' : ''}, ${d.header ? 'header' : 'no header'}, ` +
        `${d.encoding}${d.bom ? ' with BOM' : ''}, ${d.line_ending} line ends, ${d.header_line ? `header on line ${d.header_line}, ` : ''}` +
        `${d.units_row ? `units row ${d.units_row.map((u) => u || '·').join(' ')}, ` : ''}data on lines ${r.data_lines[0]}–${r.data_lines[1]}`,
    );
  }
  r.preamble.forEach((l, i) => lines.push(`  ${i === 0 ? 'preamble ' : '         '} ${l}`));
  if (r.warnings.length === 0) lines.push('  warnings  none');
  else r.warnings.forEach((w, i) => lines.push(`  ${i === 0 ? 'warnings ' : '         '} ${w}`));
  return lines;
}

export function register(program: Command): void {
  addSourceOptions(
    program
      .command('inspect')
      .description('import a table of n,k (or ε1,ε2) and report what was read: points, range, units, columns, n and k ranges, warnings')
      .argument('<source>', SOURCE_ARGUMENT_HELP)
      .option('--json', 'print the report as JSON'),
  )
    .addHelpText('after', '\nExamples:\n  nkledger inspect data/marrowick/al2o3-ald.csv --json\n  nkledger inspect sin-pecvd-a@3')
    .action(
      guarded(async (source: string, opts: SourceFlags & { json?: boolean }) => {
        const loaded = await loadSource(source, opts, { printWarnings: false }); // the report lists them
        const report = inspectReport({ table: requireTable(loaded, 'inspect'), detected: loaded.detected, warnings: loaded.warnings });
        if (opts.json) printJson(report);
        else printLines(inspectLines(sourceLabel(source, loaded), report));
      }),
    );
}
