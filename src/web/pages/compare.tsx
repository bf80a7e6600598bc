/** @jsxImportSource hono/jsx */
/** Compare any two versions (of one material or two): overlaid n and k, Δn and Δk, and the diff summary of `nkledger diff`. */
import type { Hono } from 'hono';
import { diffVersions, type VersionDiff } from '../../service/diff.ts';
import { renderDiffPlot } from '../../service/diff-plot.ts';
import { listMaterials } from '../../service/materials.ts';
import type { PageContext, WebEnv } from '../context.ts';
import { fmt, Head, Note, Notes, page, Plot, Status, versionPath } from '../layout.tsx';
import { decimatedRows } from '../plots.ts';
import { requireReader } from '../session.ts';

/** Points of the comparison curves drawn (the summary uses every point of the service's grid). */
const COMPARE_PLOT_POINTS = 500;
/** Most version refs offered as suggestions in the compare fields. */
const MAX_SUGGESTIONS = 2000;

export function registerComparePage(app: Hono<WebEnv>, ctx: PageContext): void {
  app.get('/compare', async (c) => {
    await requireReader(ctx, c);
    const a = (c.req.query('a') ?? '').trim().slice(0, 200);
    const b = (c.req.query('b') ?? '').trim().slice(0, 200);
    const diff = a && b ? await diffVersions(ctx.registry, a, b) : null;
    // Suggestions for the two fields: every version of every material, newest first (at most MAX_SUGGESTIONS).
    const refs = (await listMaterials(ctx.registry))
      .flatMap((m) => Array.from({ length: m.versions }, (_, i) => `${m.slug}@${m.versions - i}`))
      .slice(0, MAX_SUGGESTIONS);
    return c.html(
      page({
        title: diff ? `${diff.a.ref} vs ${diff.b.ref}` : 'Compare',
        session: c.get('session'),
        current: 'compare',
        children: (
          <>
            <h1>Compare two versions</h1>
            <form method="get" action="/compare" class="row">
              <div>
                <label for="a">First version (a)</label>
                <input type="text" id="a" name="a" value={a} required placeholder="sinx-pecvd@1" aria-describedby="ref-hint" list="version-refs" />
              </div>
              <div>
                <label for="b">Second version (b)</label>
                <input type="text" id="b" name="b" value={b} required placeholder="sinx-pecvd@2" aria-describedby="ref-hint" list="version-refs" />
              </div>
              <div>
                <button type="submit">Compare</button>
              </div>
            </form>
            <datalist id="version-refs">
              {refs.map((r) => (
                <option value={r} />
              ))}
            </datalist>
            <p class="hint" id="ref-hint">
              A version is written slug@N (or slug@sha256:PREFIX); the two may belong to different materials. Differences are b − a.
            </p>
            {diff && <DiffView diff={diff} />}
          </>
        ),
      }),
    );
  });
}

function decimatedDiff(diff: VersionDiff): VersionDiff {
  const curves = diff.curves;
  if (!curves) return diff;
  const rows = decimatedRows(curves.wavelength_nm.length, COMPARE_PLOT_POINTS);
  const pick = (values: number[]) => rows.map((i) => values[i]);
  return {
    ...diff,
    curves: { wavelength_nm: pick(curves.wavelength_nm), n_a: pick(curves.n_a), n_b: pick(curves.n_b), k_a: pick(curves.k_a), k_b: pick(curves.k_b) },
  };
}

function DiffView({ diff }: { diff: VersionDiff }) {
  const side = (label: string, s: VersionDiff['a']) => (
    <tr>
      <th scope="row">{label}</th>
      <td>
        <a href={versionPath(s.ref)}>{s.ref}</a>
      </td>
      <td>
        <Status status={s.status} />
      </td>
      <td>{s.model ?? 'table only'}</td>
      <td>
        {fmt(s.range_nm[0])}–{fmt(s.range_nm[1])} nm
      </td>
      <td>
        <code>{s.sha256.slice(0, 16)}…</code>
      </td>
    </tr>
  );
  return (
    <>
      <Notes kind="warn" items={diff.warnings} />
      <Notes kind="info" items={diff.notices} />
      <table>
        <Head columns={['Side', 'Version', 'Status', 'Model', 'Range', 'Content hash']} />
        <tbody>
          {side('a', diff.a)}
          {side('b', diff.b)}
        </tbody>
      </table>
      <h2>Summary</h2>
      <ul>
        <li>{diff.identical_content ? 'The content (table, model, KK report) is identical.' : 'The content differs.'}</li>
        <li>{diff.model_changed ? `The model changed: ${diff.a.model ?? 'none'} → ${diff.b.model ?? 'none'}.` : 'Same model.'}</li>
        {diff.common_range_nm ? (
          <>
            <li>
              Common range {fmt(diff.common_range_nm[0])}–{fmt(diff.common_range_nm[1])} nm.
            </li>
            {diff.dn && (
              <li>
                Largest |Δn| {fmt(diff.dn.max_abs, 3)} at {fmt(diff.dn.at_nm)} nm (RMS {fmt(diff.dn.rms, 3)}).
              </li>
            )}
            {diff.dk && (
              <li>
                Largest |Δk| {fmt(diff.dk.max_abs, 3)} at {fmt(diff.dk.at_nm)} nm (RMS {fmt(diff.dk.rms, 3)}).
              </li>
            )}
          </>
        ) : (
          <li>The two cover no common wavelength range: nothing to plot.</li>
        )}
      </ul>
      {diff.curves && <Plot svg={renderDiffPlot(decimatedDiff(diff))} label={`n and k of ${diff.a.ref} and ${diff.b.ref}, and their differences`} />}
      {diff.parameters.length > 0 && (
        <table>
          <caption>Model parameters (Δ = b − a; Δ/σ uses both standard errors)</caption>
          <Head columns={['Parameter', 'a#', 'b#', 'Δ#', 'Δ/σ#', 'Unit']} />
          <tbody>
            {diff.parameters.map((p) => (
              <tr>
                <th scope="row">
                  <code>{p.name}</code>
                </th>
                <td class="num">{fmt(p.a)}</td>
                <td class="num">{fmt(p.b)}</td>
                <td class="num">{fmt(p.delta, 3)}</td>
                <td class="num">{fmt(p.delta_sigmas, 2)}</td>
                <td>{p.unit ?? ''}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      <h2>Provenance</h2>
      {diff.provenance.length === 0 ? (
        <p>Same provenance.</p>
      ) : (
        <table>
          <Head columns={['Field', 'a', 'b']} />
          <tbody>
            {diff.provenance.map((p) => (
              <tr>
                <th scope="row">{p.field}</th>
                <td>{p.a === null ? '—' : String(p.a)}</td>
                <td>{p.b === null ? '—' : String(p.b)}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {diff.common_range_nm === null && <Note kind="warn">no common wavelength range.</Note>}
    </>
  );
}
