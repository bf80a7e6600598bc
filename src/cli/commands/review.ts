/** `nkledger review`: the drafts the acting user may approve (not their own), each with its review summary. */
import type { Command } from 'commander';
import { addAsOption } from '../admin-options.ts';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import { guarded } from '../failure.ts';
import { formatTable, printJson, printLines } from '../output.ts';
import { shortTime } from '../registry-output.ts';
import { reviewLines } from '../review-output.ts';

export function register(program: Command): void {
  addAsOption(addRegistryOptions(program.command('review')))
    .description(
      'list the drafts you may approve (not your own: two-person rule) with their KK verdict, fit convergence, warnings and ' +
        "strong correlations; --long adds each draft's full review summary",
    )
    .option('--long', 'print the full review summary of every draft')
    .option('--json', 'print {"user", "may_approve", "own_drafts", "drafts": [review summaries]} as JSON')
    .addHelpText('after', '\nExamples:\n  nkledger review --as m.lindqvist\n  nkledger review --as m.lindqvist --long')
    .action(
      guarded(async (opts: RegistryFlags & { long?: boolean; json?: boolean }) => {
        const queue = await registryOps(opts).review();
        if (opts.json) return printJson(queue);
        const own = queue.own_drafts > 0 ? ` (${queue.own_drafts} of your own left out: someone else approves those)` : '';
        if (queue.drafts.length === 0) return printLines([`no drafts for ${queue.user} to review${own}`]);
        printLines([`${queue.drafts.length} draft${queue.drafts.length === 1 ? '' : 's'} ${queue.user} may approve${own}:`]);
        if (opts.long) {
          for (const d of queue.drafts) printLines(['', ...reviewLines(d)]);
          return;
        }
        const rows = queue.drafts.map((d) => [
          d.ref,
          `${d.provenance.created_by}${d.self ? ' (you)' : ''}`,
          shortTime(d.provenance.created_at),
          d.kk.verdict,
          d.fit === null ? 'none' : `${d.fit.model}${d.fit.converged ? '' : ' NOT converged'}`,
          String(d.fit?.diagnostics.length ?? 0),
          d.correlations.pairs.length ? d.correlations.pairs.map((p) => `${p.a}/${p.b}`).join(',') : '–',
          d.blocking.length ? `accept: ${d.blocking.map((b) => b.rule).join(', ')}` : 'ok',
        ]);
        printLines(
          formatTable(
            ['version', 'created by', 'created', 'KK', 'fit', 'warnings', `|r| ≥ ${queue.drafts[0].correlations.threshold}`, 'to approve'],
            rows,
          ),
        );
      }),
    );
}
