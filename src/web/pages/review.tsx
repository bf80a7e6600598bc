/** @jsxImportSource hono/jsx */
/**
 * Review: the drafts the signed-in approver may approve, each with its KK verdict, fit warnings and
 * provenance shown before the buttons; and the lifecycle forms (approve, withdraw, retire) that post to
 * the same service functions the CLI and API call, so the two-person rule and the status rules are theirs.
 */
import type { Hono } from 'hono';
import type { FitReport } from '../../fit/types.ts';
import type { KkReport } from '../../kk/check.ts';
import type { VersionDetail, VersionRecord } from '../../registry/types.ts';
import { sameUser } from '../../service/actor.ts';
import { approve, retire, withdraw } from '../../service/lifecycle.ts';
import { listMaterials, getMaterial } from '../../service/materials.ts';
import { showVersion } from '../../service/versions.ts';
import { InputError } from '../../errors.ts';
import type { PageContext, WebEnv } from '../context.ts';
import { fmt, Note, Notes, page, Status, versionPath, When } from '../layout.tsx';
import { localPath, requireSession } from '../session.ts';
import { FitDetails, LifecycleForms, MAX_REASON, pathRef } from '../parts.tsx';

/** Drafts `user` may approve: not their own, unless the registry allows self-approval. */
function reviewableDrafts(ctx: PageContext, user: string): VersionRecord[] {
  const selfAllowed = ctx.currentSettings().allow_self_approval;
  return listMaterials(ctx.registry)
    .flatMap((m) => (m.versions > 0 ? getMaterial(ctx.registry, m.slug).versions : []))
    .filter((v) => v.status === 'draft' && (selfAllowed || !sameUser(v.created_by, user)));
}

export function registerReviewPages(app: Hono<WebEnv>, ctx: PageContext): void {
  app.get('/review', (c) => {
    const session = requireSession(c, 'approver');
    const drafts = reviewableDrafts(ctx, session.principal.user).map((d) => showVersion(ctx.registry, d.ref));
    return c.html(
      page({
        title: 'Review',
        session,
        current: 'review',
        children: (
          <>
            <h1>Drafts waiting for review</h1>
            <p>
              {drafts.length === 0
                ? 'No draft is waiting for you: your own drafts need another approver.'
                : `${drafts.length} draft(s) you may approve (your own drafts need another approver). Read the checks before deciding.`}
            </p>
            {drafts.map((v) => (
              <ReviewItem v={v} csrf={session.csrf} />
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
      if (verb === 'approve') approve(ctx.registry, ref, user);
      else if (verb === 'withdraw') withdraw(ctx.registry, ref, user, reason || undefined);
      else {
        if (!reason)
          throw new InputError('retire-reason', 'say why the version is retired: the reason is kept in the audit log', {}, 400, { option: 'reason' });
        retire(ctx.registry, ref, reason, user);
      }
      return c.redirect(localPath(form.back, versionPath(ref)), 303);
    });
  act('approve');
  act('withdraw');
  act('retire');
}

function ReviewItem({ v, csrf }: { v: VersionDetail; csrf: string }) {
  const fit = v.content.fit as unknown as FitReport | null;
  const kk = v.content.kk as unknown as KkReport | null;
  const p = v.provenance;
  const kkKind = kk?.verdict === 'consistent' ? 'good' : kk?.verdict === 'inconsistent' ? 'bad' : 'warn';
  return (
    <section class="review-item" aria-labelledby={`h-${v.slug}-${v.version}`}>
      <h2 id={`h-${v.slug}-${v.version}`}>
        <a href={versionPath(v.ref)}>{v.ref}</a> <Status status={v.status} />
      </h2>
      <p>
        By {v.created_by}, <When at={v.created_at} />. {v.model ? `${v.model} model` : 'table only'} over {fmt(v.range_nm[0])}–{fmt(v.range_nm[1])}{' '}
        nm. Sample {p.sample ?? 'not recorded'}; instrument {p.instrument ?? 'not recorded'}; source file {p.source_file ?? 'not recorded'}.
      </p>
      {kk ? (
        <Note kind={kkKind}>
          <span class="verdict">Kramers-Kronig verdict {kk.verdict}.</span> {kk.summary}
        </Note>
      ) : (
        <Note kind="warn">no Kramers-Kronig check is stored with this version.</Note>
      )}
      {fit ? <FitDetails fit={fit} /> : <Notes kind="info" items={['no model was fitted: the table is interpolated.']} />}
      <LifecycleForms version={v} csrf={csrf} back="/review" />
    </section>
  );
}
