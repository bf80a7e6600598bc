/** `nkledger diff REF REF`: parameter changes, largest |Δn| and |Δk| and where, provenance changes. */
import { writeFile } from 'node:fs/promises';
import type { Command } from 'commander';
import { renderDiffPlot } from '../../service/diff-plot.ts';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import { guarded } from '../failure.ts';
import { formatTable, printJson, printLines } from '../output.ts';
import { printResolution } from '../registry-output.ts';

const fmt = (v: number | null, digits = 5) =>
  v === null ? '-' : Math.abs(v) !== 0 && (Math.abs(v) < 1e-3 || Math.abs(v) >= 1e5) ? v.toExponential(3) : v.toFixed(digits);

export function register(program: Command): void {
  addRegistryOptions(program.command('diff'))
    .description('compare two versions: model parameters, the largest |Δn| and |Δk| over their common range and where, provenance')
    .argument('<a>', 'first version (slug@N, slug@sha256:PREFIX or bare slug)')
    .argument('<b>', 'second version')
    .option('--json', 'print {"a", "b", "parameters", "common_range_nm", "dn", "dk", "provenance", ...} as JSON (without the curves)')
    .option('--plot <file.svg>', 'write an SVG of n, k and Δn, Δk over the common range')
    .addHelpText('after', '\nΔ is always b − a. Example:\n  nkledger diff sin-pecvd-a@2 sin-pecvd-a@3 --plot sin-a-2-vs-3.svg')
    .action(
      guarded(async (a: string, b: string, opts: RegistryFlags & { json?: boolean; plot?: string }) => {
        const diff = await registryOps(opts).diff(a, b);
        printResolution(diff);
        if (opts.plot) await writeFile(opts.plot, renderDiffPlot(diff));
        const { curves: _curves, notices: _n, warnings: _w, ...summary } = diff;
        if (opts.json) return printJson(summary);
        const lines = [`a = ${diff.a.ref} sha256:${diff.a.sha256.slice(0, 12)}…  b = ${diff.b.ref} sha256:${diff.b.sha256.slice(0, 12)}…`];
        if (diff.identical_content) lines.push('content (table, model, KK report) is identical');
        if (diff.model_changed) lines.push(`model: ${diff.a.model ?? 'none'} → ${diff.b.model ?? 'none'}`);
        if (diff.parameters.length) {
          const rows = diff.parameters.map((p) => [
            p.name,
            fmt(p.a),
            fmt(p.b),
            fmt(p.delta),
            p.delta_sigmas === null ? '-' : p.delta_sigmas.toFixed(1),
            p.unit ?? '',
          ]);
          lines.push('', ...formatTable(['parameter', 'a', 'b', 'Δ', 'Δ/σ', 'unit'], rows));
        }
        lines.push('');
        if (diff.common_range_nm && diff.dn && diff.dk) {
          lines.push(`common range ${diff.common_range_nm[0]}–${diff.common_range_nm[1]} nm`);
          lines.push(`  max |Δn| ${fmt(diff.dn.max_abs)} at ${fmt(diff.dn.at_nm, 1)} nm (rms ${fmt(diff.dn.rms)})`);
          lines.push(`  max |Δk| ${fmt(diff.dk.max_abs)} at ${fmt(diff.dk.at_nm, 1)} nm (rms ${fmt(diff.dk.rms)})`);
        } else lines.push(`no common wavelength range (${diff.a.range_nm.join('–')} nm vs ${diff.b.range_nm.join('–')} nm)`);
        lines.push('', diff.provenance.length ? 'provenance changes:' : 'provenance unchanged');
        for (const p of diff.provenance) lines.push(`  ${p.field}: ${JSON.stringify(p.a)} → ${JSON.stringify(p.b)}`);
        if (opts.plot) lines.push('', `plot written to ${opts.plot}`);
        printLines(lines);
      }),
    );
}
