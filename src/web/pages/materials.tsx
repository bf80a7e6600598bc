/** @jsxImportSource hono/jsx */
/** The index (search and tag filter over the materials) and a material's page (versions, n,k plot, history). */
import type { Hono } from 'hono';
import { history, versionStatusCounts } from '../../service/materials.ts';
import { searchMaterials } from '../../service/material-search.ts';
import { evaluateVersion } from '../../service/evaluate-version.ts';
import { VERSION_STATUSES } from '../../registry/schema.ts';
import { roleAllows } from '../../service/tokens.ts';
import type { AuditEntry, MaterialRecord, VersionRecord } from '../../registry/types.ts';
import type { PageContext, WebEnv } from '../context.ts';
import { fmt, Head, Note, page, Plot, Status, versionPath, When } from '../layout.tsx';
import { curveGrid, nkPlot } from '../plots.ts';
import { requireReader } from '../session.ts';

const MAX_QUERY = 200;

export function registerMaterialPages(app: Hono<WebEnv>, ctx: PageContext): void {
  app.get('/', async (c) => {
    await requireReader(ctx, c);
    const q = (c.req.query('q') ?? '').slice(0, MAX_QUERY);
    const tag = c.req.query('tag') ?? '';
    const all = await searchMaterials(ctx.registry, '');
    const tags = [...new Set(all.flatMap((m) => m.tags))].sort();
    const found = (q ? await searchMaterials(ctx.registry, q) : all).filter((m) => tag === '' || m.tags.includes(tag));
    const counts = await versionStatusCounts(ctx.registry);
    const session = c.get('session');
    return c.html(
      page({
        title: 'Materials',
        session,
        current: 'materials',
        children: (
          <>
            <h1>Materials</h1>
            <form method="get" action="/" role="search" class="row">
              <div>
                <label for="q">Search name, slug, tags and description</label>
                <input type="search" id="q" name="q" value={q} maxlength={MAX_QUERY} />
              </div>
              <div>
                <label for="tag">Tag</label>
                <select id="tag" name="tag">
                  <option value="">any tag</option>
                  {tags.map((t) => (
                    <option value={t} selected={t === tag}>
                      {t}
                    </option>
                  ))}
                </select>
              </div>
              <div>
                <button type="submit">Search</button>
              </div>
            </form>
            <p aria-live="polite">
              {found.length === all.length ? `${all.length} materials` : `${found.length} of ${all.length} materials match`}
              {q && <> for “{q}”</>}
              {tag && <> with tag {tag}</>}.
            </p>
            {found.length > 0 && <MaterialTable materials={found} counts={counts} />}
          </>
        ),
      }),
    );
  });

  app.get('/materials/:slug', async (c) => {
    await requireReader(ctx, c);
    const { material, versions, audit } = await history(ctx.registry, c.req.param('slug'));
    const latest = material.latest_approved;
    let plot: string | null = null;
    if (latest !== null) {
      const v = versions.find((x) => x.version === latest)!;
      const curve = await evaluateVersion(ctx.registry, v.ref, curveGrid(v.range_nm[0], v.range_nm[1]));
      plot = nkPlot(
        `${v.ref}: n and k over ${fmt(v.range_nm[0])}–${fmt(v.range_nm[1])} nm (${curve.source === 'model' ? curve.model : 'measured table'})`,
        curve,
        v.ref,
      );
    }
    const newestFirst = [...versions].reverse();
    const role = c.get('session')?.principal.role;
    const canUpload = role !== undefined && roleAllows(role, 'editor');
    return c.html(
      page({
        title: material.name,
        session: c.get('session'),
        current: 'materials',
        children: (
          <>
            <p>
              <a href="/">Materials</a> › <code>{material.slug}</code>
            </p>
            <h1>{material.name}</h1>
            {material.description && <p>{material.description}</p>}
            <Tags tags={material.tags} />
            <p class="muted">
              Created by {material.created_by} on <When at={material.created_at} />; {material.versions} version(s).
            </p>
            <h2>Latest approved</h2>
            {plot ? (
              <>
                <p>
                  <a href={versionPath(`${material.slug}@${latest}`)}>
                    {material.slug}@{latest}
                  </a>{' '}
                  is the version to use now.
                </p>
                <Plot svg={plot} label={`n and k of ${material.slug}@${latest} against wavelength`} />
              </>
            ) : (
              <Note kind="warn">no version of this material is approved yet: drafts below are not for use in designs.</Note>
            )}
            <h2>Versions</h2>
            {canUpload && (
              <p>
                <a href={`/upload?material=${encodeURIComponent(material.slug)}`}>Upload a new measurement of this material</a>
              </p>
            )}
            <VersionTable versions={newestFirst} />
            {versions.length >= 2 && <CompareForm versions={newestFirst} />}
            <h2>History</h2>
            <HistoryList audit={audit} />
          </>
        ),
      }),
    );
  });
}

function Tags({ tags }: { tags: string[] }) {
  if (tags.length === 0) return null;
  return (
    <p class="tags">
      Tags:{' '}
      {tags.map((t) => (
        <a href={`/?tag=${encodeURIComponent(t)}`}>{t}</a>
      ))}
    </p>
  );
}

function MaterialTable({ materials, counts }: { materials: MaterialRecord[]; counts: Awaited<ReturnType<typeof versionStatusCounts>> }) {
  return (
    <table>
      <caption class="muted">Materials, by slug</caption>
      <Head columns={['Material', 'Tags', 'Latest approved', 'Versions by status']} />
      <tbody>
        {materials.map((m) => {
          const byStatus = counts.get(m.slug);
          return (
            <tr>
              <td>
                <a href={`/materials/${m.slug}`}>{m.name}</a>
                <br />
                <code>{m.slug}</code>
                {m.description && <div class="muted">{m.description.length > 160 ? `${m.description.slice(0, 157)}…` : m.description}</div>}
              </td>
              <td class="tags">
                {m.tags.map((t) => (
                  <a href={`/?tag=${encodeURIComponent(t)}`}>{t}</a>
                ))}
              </td>
              <td>
                {m.latest_approved === null ? (
                  <span class="muted">none yet</span>
                ) : (
                  <a href={versionPath(`${m.slug}@${m.latest_approved}`)}>
                    {m.slug}@{m.latest_approved}
                  </a>
                )}
              </td>
              <td class="counts">
                {byStatus
                  ? VERSION_STATUSES.filter((s) => byStatus[s] > 0)
                      .map((s) => `${byStatus[s]} ${s}`)
                      .join(', ')
                  : 'no versions'}
              </td>
            </tr>
          );
        })}
      </tbody>
    </table>
  );
}

export function VersionTable({ versions }: { versions: VersionRecord[] }) {
  return (
    <table>
      <Head columns={['Version', 'Status', 'Model', 'KK check', 'Created', 'Approved', 'Retired / withdrawn']} />
      <tbody>
        {versions.map((v) => (
          <tr>
            <td>
              <a href={versionPath(v.ref)}>{v.ref}</a>
            </td>
            <td>
              <Status status={v.status} />
            </td>
            <td>{v.model ?? <span class="muted">table only</span>}</td>
            <td>{v.kk_verdict ?? '—'}</td>
            <td>
              {v.created_by}
              <br />
              <When at={v.created_at} />
            </td>
            <td>
              {v.approved_by ? (
                <>
                  {v.approved_by}
                  {v.self_approved && ' (self-approved)'}
                  <br />
                  <When at={v.approved_at} />
                </>
              ) : (
                '—'
              )}
            </td>
            <td>
              {v.retired_by && (
                <>
                  retired by {v.retired_by}, <When at={v.retired_at} />
                  {v.retire_reason && <div class="muted">“{v.retire_reason}”</div>}
                </>
              )}
              {v.withdrawn_by && (
                <>
                  withdrawn by {v.withdrawn_by}, <When at={v.withdrawn_at} />
                  {v.withdraw_reason && <div class="muted">“{v.withdraw_reason}”</div>}
                </>
              )}
              {!v.retired_by && !v.withdrawn_by && '—'}
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

/** Two versions of this material to compare (newest first; preselects the two newest). */
function CompareForm({ versions }: { versions: VersionRecord[] }) {
  const select = (name: string, label: string, chosen: number) => (
    <div>
      <label for={`cmp-${name}`}>{label}</label>
      <select id={`cmp-${name}`} name={name}>
        {versions.map((v, i) => (
          <option value={v.ref} selected={i === chosen}>
            {v.ref} ({v.status})
          </option>
        ))}
      </select>
    </div>
  );
  return (
    <form method="get" action="/compare" class="row" aria-label="Compare two versions">
      {select('a', 'Compare', 1)}
      {select('b', 'with', 0)}
      <div>
        <button type="submit">Compare</button>
      </div>
    </form>
  );
}

function HistoryList({ audit }: { audit: AuditEntry[] }) {
  if (audit.length === 0) return <p class="muted">No events.</p>;
  return (
    <ol class="history">
      {[...audit].reverse().map((e) => {
        const accepted = e.detail.accepted_warnings as { reason?: unknown; findings?: unknown } | undefined;
        const reason =
          typeof e.detail.reason === 'string'
            ? e.detail.reason
            : typeof accepted?.reason === 'string'
              ? `accepted ${Array.isArray(accepted.findings) ? accepted.findings.join(', ') : 'review findings'}: ${accepted.reason}`
              : null;
        return (
          <li>
            <When at={e.at} /> — <strong>{e.actor}</strong>: {e.action}
            {e.ref && (
              <>
                {' '}
                <a href={versionPath(e.ref)}>{e.ref}</a>
              </>
            )}
            {reason && <span class="muted"> (“{reason}”)</span>}
          </li>
        );
      })}
    </ol>
  );
}
