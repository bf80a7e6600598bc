/** @jsxImportSource hono/jsx */
/**
 * Review: the drafts the signed-in approver may approve, each with its KK verdict, fit warnings and
 * provenance shown before the buttons; and the lifecycle forms (approve, withdraw, retire) that post to
 * the same service functions the CLI and API call, so the two-person rule and the status rules are theirs.
 */
import type { Hono } from 'hono';
import type { FitReport } from '../../fit/types.ts';
import { approve, retire, withdraw } from '../../service/lifecycle.ts';
import { reviewQueue, type ReviewQueueEntry } from '../../service/review.ts';
import { showVersion } from '../../service/versions.ts';
import { InputError } from '../../errors.ts';
import type { PageContext, WebEnv } from '../context.ts';
import { page, Status, versionPath } from '../layout.tsx';
import { localPath, requireSession } from '../session.ts';
import { FitDetails, LifecycleForms, MAX_REASON, pathRef, ReviewFindings } from '../parts.tsx';

export function registerReviewPages(app: Hono<WebEnv>, ctx: PageContext): void {
  app.get('/review', async (c) => {
    const session = requireSession(c, 'approver');
    const queue = await reviewQueue(ctx.registry, { user: session.principal.user, role: session.principal.role });
    const fits: (FitReport | null)[] = [];
    for (const entry of queue.drafts) fits.push((await showVersion(ctx.registry, entry.ref)).content.fit as unknown as FitReport | null);
    return c.html(
      page({
        title: 'Review',
        session,
        current: 'review',
        children: (
          <>
            <h1>Drafts waiting for review</h1>
            <p>
              {queue.drafts.length === 0
                ? 'No draft is waiting for you.'
                : `${queue.drafts.length} draft(s) you may approve, oldest first. Read the checks before deciding.`}
              {queue.own_drafts > 0 && ` ${queue.own_drafts} draft(s) of your own are left out: someone else must approve them.`}
            </p>
            {queue.drafts.map((entry, i) => (
              <ReviewItem entry={entry} fit={fits[i]} csrf={session.csrf} />
            ))}
          </>
        ),
      }),
    );
  });

  const act = (verb: 'approve' | 'retire' | 'withdraw') =>
    app.post(`/materials/:slug/versions/:n/${verb}`, async (c) => {
      const session = requireSession(c, 'approver');
      const ref = pathRef(c);
      const form = await c.req.parseBody();
      const reason = typeof form.reason === 'string' ? form.reason.trim().slice(0, MAX_REASON) : '';
      const user = session.principal.user;
      const accept = typeof form.accept_warnings === 'string' && form.accept_warnings.trim() ? form.accept_warnings.slice(0, MAX_REASON) : undefined;
      if (verb === 'approve') await approve(ctx.registry, ref, user, { acceptWarnings: accept });
      else if (verb === 'withdraw') await withdraw(ctx.registry, ref, user, reason || undefined);
      else {
        if (!reason)
          throw new InputError('retire-reason', 'say why the version is retired: the reason is kept in the audit log', {}, { option: 'reason' });
        await retire(ctx.registry, ref, reason, user);
      }
      return c.redirect(localPath(form.back, versionPath(ref)), 303);
    });
  act('approve');
  act('withdraw');
  act('retire');
}

function ReviewItem({ entry, fit, csrf }: { entry: ReviewQueueEntry; fit: FitReport | null; csrf: string }) {
  const [slug, n] = entry.ref.split('@');
  return (
    <section class="review-item" aria-labelledby={`h-${slug}-${n}`}>
      <h2 id={`h-${slug}-${n}`}>
        <a href={versionPath(entry.ref)}>{entry.ref}</a> <Status status={entry.status} />
        {entry.self && ' (your own: self-approval is allowed on this registry)'}
      </h2>
      <ReviewFindings review={entry} />
      {fit && <FitDetails fit={fit} warnings={false} />}
      <LifecycleForms version={entry} csrf={csrf} back="/review" blocking={entry.blocking} />
    </section>
  );
}
