/** @jsxImportSource hono/jsx */
/**
 * A version's page (provenance, measured vs model, parameters, KK verdict, hash, how to pin it, downloads)
 * and its downloads, which are the CLI's `nkledger export` output (src/service/export-version.ts).
 */
import type { Hono } from 'hono';
import type { FitReport } from '../../fit/types.ts';
import type { KkReport } from '../../kk/check.ts';
import { PROVENANCE_FIELDS, type VersionDetail } from '../../registry/types.ts';
import { exportVersion } from '../../service/export-version.ts';
import { reviewVersion } from '../../service/review.ts';
import { showVersion } from '../../service/versions.ts';
import { roleAllows } from '../../service/tokens.ts';
import type { PageContext, WebContext, WebEnv } from '../context.ts';
import { fmt, Notes, page, Status, versionPath, When } from '../layout.tsx';
import { requireReader, serverOrigin } from '../session.ts';
import { FitSection, KkSection, LifecycleForms, pathRef } from '../parts.tsx';

const PROVENANCE_LABEL: Record<(typeof PROVENANCE_FIELDS)[number], string> = {
  sample: 'Sample',
  substrate: 'Substrate',
  process: 'Process',
  instrument: 'Instrument',
  method: 'Method',
  angles_deg: 'Angles of incidence (°)',
  measured_on: 'Measured on',
  operator: 'Operator',
  source_file: 'Source file',
  source_sha256: 'Source file SHA-256',
  notes: 'Notes',
};

export function registerVersionPages(app: Hono<WebEnv>, ctx: PageContext): void {
  app.get('/materials/:slug/versions/:n', async (c) => {
    await requireReader(ctx, c);
    const v = await showVersion(ctx.registry, pathRef(c));
    const session = c.get('session');
    const canAct = session !== null && roleAllows(session.principal.role, 'approver');
    return c.html(
      page({
        title: v.ref,
        session,
        current: 'materials',
        children: (
          <VersionView
            v={v}
            origin={serverOrigin(c)}
            actions={
              canAct && session ? (
                <LifecycleForms
                  version={v}
                  csrf={session.csrf}
                  back={versionPath(v.ref)}
                  blocking={v.status === 'draft' ? (await reviewVersion(ctx.registry, v.ref)).blocking : []}
                />
              ) : null
            }
          />
        ),
      }),
    );
  });

  const download = (c: WebContext, text: string, type: string, name: string) =>
    c.body(text, 200, {
      'content-type': type,
      'content-disposition': `attachment; filename="${name}"`,
      'cache-control': 'no-cache',
    });

  app.get('/materials/:slug/versions/:n/table.csv', async (c) => {
    await requireReader(ctx, c);
    const e = await exportVersion(ctx.registry, pathRef(c), 'csv');
    return download(c, e.text, 'text/csv; charset=utf-8', `${e.ref.replace('@', '-v')}.csv`);
  });
  app.get('/materials/:slug/versions/:n/model.csv', async (c) => {
    await requireReader(ctx, c);
    const step = Number(c.req.query('step_nm') ?? '1');
    const e = await exportVersion(ctx.registry, pathRef(c), 'csv', { source: 'model', stepNm: step });
    return download(c, e.text, 'text/csv; charset=utf-8', `${e.ref.replace('@', '-v')}-model.csv`);
  });
  app.get('/materials/:slug/versions/:n/record.json', async (c) => {
    await requireReader(ctx, c);
    const e = await exportVersion(ctx.registry, pathRef(c), 'json');
    return download(c, e.text, 'application/json', `${e.ref.replace('@', '-v')}.json`);
  });
}

function VersionView({ v, origin, actions }: { v: VersionDetail; origin: string; actions: unknown }) {
  const fit = v.content.fit as unknown as FitReport | null;
  const kk = v.content.kk as unknown as KkReport | null;
  const [slug, number] = [v.slug, v.version];
  const apiPath = `/api/v1/materials/${slug}/versions/${number}`;
  const [lo, hi] = v.range_nm;
  return (
    <>
      <p>
        <a href="/">Materials</a> › <a href={`/materials/${slug}`}>{slug}</a> › version {number}
      </p>
      <h1>
        {v.ref} <Status status={v.status} />
      </h1>
      <Notes kind="warn" items={v.warnings} />
      <Notes kind="info" items={v.notices} />
      <dl class="facts">
        <dt>Content</dt>
        <dd>
          {v.has_table ? 'measured table' : 'no table'}
          {v.model ? `, ${v.model} model` : ', no model'}, usable over {fmt(lo)}–{fmt(hi)} nm
        </dd>
        <dt>Created</dt>
        <dd>
          {v.created_by}, <When at={v.created_at} />
        </dd>
        <dt>Approved</dt>
        <dd>
          {v.approved_by ? (
            <>
              {v.approved_by}
              {v.self_approved && ' (self-approved under the allow_self_approval setting)'}, <When at={v.approved_at} />
            </>
          ) : (
            'not approved'
          )}
        </dd>
        {v.retired_by && (
          <>
            <dt>Retired</dt>
            <dd>
              {v.retired_by}, <When at={v.retired_at} />: {v.retire_reason}
            </dd>
          </>
        )}
        {v.withdrawn_by && (
          <>
            <dt>Withdrawn</dt>
            <dd>
              {v.withdrawn_by}, <When at={v.withdrawn_at} />
              {v.withdraw_reason && `: ${v.withdraw_reason}`}
            </dd>
          </>
        )}
        <dt>Content hash</dt>
        <dd>
          <code>sha256:{v.sha256}</code>
        </dd>
      </dl>

      <h2>Pin it</h2>
      <p>
        In a design's lockfile (the content hash is recorded, and <code>nkledger lock verify</code> checks it):
      </p>
      <pre>
        <code>{`nkledger lock add ${v.ref} --lock design.nklock.json`}</code>
      </pre>
      <p>Over HTTP (the record, and n,k on a wavelength grid):</p>
      <pre>
        <code>{`${origin}${apiPath}\n${origin}${apiPath}/nk?from_nm=${fmt(lo)}&to_nm=${fmt(hi)}&step_nm=${fmt(Math.max((hi - lo) / 100, 0.001), 3)}`}</code>
      </pre>

      <h2>Downloads</h2>
      <ul>
        <li>
          <a href={`${versionPath(v.ref)}/table.csv`} download>
            CSV: {v.has_table ? 'the measured table' : 'the model every 1 nm'}
          </a>{' '}
          (as <code>nkledger export {v.ref}</code> writes it)
        </li>
        {fit && (
          <li>
            <a href={`${versionPath(v.ref)}/model.csv`} download>
              CSV: the {fit.model} model every 1 nm over {fmt(lo)}–{fmt(hi)} nm
            </a>
          </li>
        )}
        <li>
          <a href={`${versionPath(v.ref)}/record.json`} download>
            JSON: the whole record
          </a>{' '}
          (content and provenance; its SHA-256 can be recomputed outside nkledger)
        </li>
      </ul>

      <h2>Provenance</h2>
      <dl class="facts">
        {PROVENANCE_FIELDS.map((f) => {
          const value = v.provenance[f];
          return (
            <>
              <dt>{PROVENANCE_LABEL[f]}</dt>
              <dd>
                {value === null || value === undefined ? (
                  <span class="muted">not recorded</span>
                ) : f === 'source_sha256' ? (
                  <code>{String(value)}</code>
                ) : Array.isArray(value) ? (
                  value.join(', ')
                ) : (
                  String(value)
                )}
              </dd>
            </>
          );
        })}
        {v.provenance.absent_columns && (
          <>
            <dt>Columns not in the file</dt>
            <dd>{v.provenance.absent_columns.join(', ')} (stored as 0, not measured)</dd>
          </>
        )}
      </dl>
      {v.provenance.preamble && v.provenance.preamble.length > 0 && (
        <>
          <h3>Lines above the table in the file (preamble)</h3>
          <pre>{v.provenance.preamble.join('\n')}</pre>
        </>
      )}

      <FitSection v={v} fit={fit} />
      <KkSection kk={kk} />
      {actions && (
        <>
          <h2>Decide</h2>
          <p>The checks above are what the decision rests on; every decision is kept in the audit log under your name.</p>
          {actions}
        </>
      )}
    </>
  );
}
