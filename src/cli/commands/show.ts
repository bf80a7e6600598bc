/** `nkledger show REF`: one version with its provenance, lifecycle and reports. */
import type { Command } from 'commander';
import { buildModel } from '../../models/catalogue.ts';
import { PROVENANCE_FIELDS, type StoredFitReport } from '../../registry/types.ts';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import { guarded } from '../failure.ts';
import { printJson, printLines } from '../output.ts';
import { contentSummary, lifecycleLines, printResolution } from '../registry-output.ts';

export function register(program: Command): void {
  addRegistryOptions(program.command('show'))
    .description('show a version: status, content hash, what it holds, provenance, fit parameters and KK verdict')
    .argument('<ref>', 'slug@N, slug@sha256:PREFIX, or a bare slug (latest approved)')
    .option('--json', 'print {"ref", "status", "sha256", "provenance", "content", ...} as JSON')
    .addHelpText('after', '\nExample:\n  nkledger show sin-pecvd-a@2')
    .action(
      guarded(async (ref: string, opts: RegistryFlags & { json?: boolean }) => {
        const v = await registryOps(opts).version(ref);
        printResolution(v);
        if (opts.json) return printJson(v);
        const lines = [
          `${v.ref}  ${v.status}`,
          `  sha256     ${v.sha256}`,
          `  content    ${contentSummary(v)}`,
          ...lifecycleLines(v).map((l) => `  ${l}`),
        ];
        const prov = PROVENANCE_FIELDS.filter((f) => v.provenance[f] !== null).map((f) => {
          const value = v.provenance[f];
          return `    ${f.padEnd(13)} ${Array.isArray(value) ? value.join(', ') : value}`;
        });
        if (v.provenance.absent_columns)
          prov.push(`    ${'absent'.padEnd(13)} ${v.provenance.absent_columns.join(', ')} (not in the file; k stored as 0)`);
        if (prov.length) lines.push('  provenance', ...prov);
        if (v.provenance.preamble) lines.push("  preamble (the lines above the file's header)", ...v.provenance.preamble.map((l) => `    ${l}`));
        const fit = v.content.fit;
        if (fit) {
          lines.push(`  model      ${fit.model}, valid ${fit.range_nm[0]}–${fit.range_nm[1]} nm`);
          for (const [name, p] of inModelOrder(fit)) {
            const err = typeof p.stderr === 'number' ? ` ± ${p.stderr.toPrecision(2)}` : '';
            lines.push(`    ${name.padEnd(13)} ${p.value.toPrecision(6)}${err}${p.unit ? ` ${p.unit}` : ''}`);
          }
        }
        const kk = v.content.kk as { verdict: string; summary?: string } | null;
        if (kk) lines.push(`  KK check   ${kk.verdict}${kk.summary ? `: ${kk.summary}` : ''}`);
        printLines(lines);
      }),
    );
}

/**
 * The parameters in the model's own order (as `fit` prints them): the stored report's keys are sorted by the
 * canonical serialization, so the order comes from rebuilding the model; names it does not know go last.
 */
function inModelOrder(fit: StoredFitReport): [string, StoredFitReport['parameters'][string]][] {
  const options = (fit as { options?: { terms?: number; urbach?: boolean } }).options ?? {};
  let order: string[] = [];
  try {
    order = buildModel(fit.model, { terms: options.terms, urbach: options.urbach }).parameters.map((p) => p.name);
  } catch {
    // A model the catalogue no longer builds: keep the stored order.
  }
  const rank = (name: string) => (order.includes(name) ? order.indexOf(name) : order.length);
  return Object.entries(fit.parameters).sort(([a], [b]) => rank(a) - rank(b));
}
