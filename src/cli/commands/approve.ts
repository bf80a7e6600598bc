/**
 * `nkledger approve REF`: show the version's review summary, then approve the draft (by someone other than its
 * creator, unless self-approval is on). A KK-inconsistent or unconverged version needs --accept-warnings REASON.
 */
import type { Command } from 'commander';
import { InputError } from '../../errors.ts';
import { UNACCEPTED_WARNINGS } from '../../service/lifecycle.ts';
import type { ReviewSummary } from '../../service/review.ts';
import { addAsOption } from '../admin-options.ts';
import { addRegistryOptions, registryOps, type RegistryFlags } from '../registry-access.ts';
import { guarded } from '../failure.ts';
import { printJson, printLines } from '../output.ts';
import { printVersionBrief } from '../registry-output.ts';
import { reviewLines } from '../review-output.ts';

interface ApproveFlags extends RegistryFlags {
  json?: boolean;
  acceptWarnings?: string;
}

export function register(program: Command): void {
  addAsOption(addRegistryOptions(program.command('approve')))
    .description(
      "show a draft's review summary (KK verdict, fit convergence and warnings, strong correlations, provenance), then approve it; " +
        'the approver must not be its creator (a one-person lab: `nkledger settings set allow_self_approval on`); ' +
        'a KK-inconsistent or unconverged version needs --accept-warnings REASON',
    )
    .argument('<ref>', 'the version, e.g. sin-pecvd-a@3')
    .option('--accept-warnings <reason>', 'approve despite an inconsistent KK check or an unconverged fit; the reason goes into the audit log')
    .option('--json', 'print the version record with its "review" and "accepted_warnings" as JSON')
    .addHelpText(
      'after',
      '\nExamples:\n  NKLEDGER_USER=bob nkledger approve sin-pecvd-a@3\n  nkledger approve sin-pecvd-a@4 --as bob --accept-warnings "n step at 520 nm is the known substrate interface artefact"',
    )
    .action(
      guarded(async (ref: string, opts: ApproveFlags) => {
        try {
          const v = await registryOps(opts).approve(ref, { acceptWarnings: opts.acceptWarnings });
          if (opts.json) return printJson(v);
          printLines([...reviewLines(v.review), '']);
          printVersionBrief(v);
          if (v.accepted_warnings) {
            const what = v.accepted_warnings.findings.length ? v.accepted_warnings.findings.join(', ') : 'no blocking findings';
            printLines([`  accepted   ${what}: ${v.accepted_warnings.reason}`]);
          }
        } catch (err) {
          // A refusal for unaccepted findings shows the reviewer what they are before the message.
          const review = err instanceof InputError && err.rule === UNACCEPTED_WARNINGS ? (err.extensions.review as ReviewSummary) : undefined;
          if (review && !opts.json) printLines([...reviewLines(review), '']);
          throw err;
        }
      }),
    );
}
