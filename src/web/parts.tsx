/** @jsxImportSource hono/jsx */
/** Parts shared by the version and review pages: the path's version, the fit and KK sections, the lifecycle forms. */
import type { FitReport } from '../fit/types.ts';
import type { KkReport } from '../kk/check.ts';
import { checkSlug } from '../registry/refs.ts';
import type { VersionDetail, VersionRecord } from '../registry/types.ts';
import type { BlockingFinding, ReviewSummary } from '../service/review.ts';
import { HttpProblem } from '../http-status.ts';
import type { WebContext } from './context.ts';
import { fmt, Head, Note, Notes, Plot, versionPath, When } from './layout.tsx';
import { curveGrid, decimateTable, fitPlot, kkPlot, nkPlot } from './plots.ts';
import { evaluateFitReport } from '../fit/fit.ts';

/** `slug@N` from the path, refusing a malformed slug or number (404: no such page). */
export function pathRef(c: WebContext): string {
  const slug = checkSlug(c.req.param('slug') ?? '');
  const n = c.req.param('n') ?? '';
  if (!/^[1-9][0-9]{0,8}$/.test(n)) throw new HttpProblem(404, 'version-syntax', `"${n}" is not a version number (versions are 1, 2, 3, …)`);
  return `${slug}@${n}`;
}

/** Reasons are kept in the audit log; the API allows the same length. */
export const MAX_REASON = 2000;

/** The lifecycle forms a version's status allows (an approver's view). */
export function LifecycleForms({
  version,
  csrf,
  back,
  blocking = [],
}: {
  version: Pick<VersionRecord, 'ref' | 'status'>;
  csrf: string;
  back: string;
  /** Review findings that need a reason before approval (service/review.ts); the form then asks for one. */
  blocking?: BlockingFinding[];
}) {
  const action = (verb: string) => `${versionPath(version.ref)}/${verb}`;
  const id = version.ref.replace(/[^A-Za-z0-9]/g, '-');
  const hidden = (
    <>
      <input type="hidden" name="csrf" value={csrf} />
      <input type="hidden" name="back" value={back} />
    </>
  );
  if (version.status === 'draft') {
    return (
      <div class="actions">
        <form method="post" action={action('approve')}>
          {hidden}
          {blocking.length > 0 && (
            <>
              {blocking.map((f) => (
                <Note kind="bad">
                  {f.message} [{f.rule}]
                </Note>
              ))}
              <label for={`accept-${id}`}>Reason for approving despite these findings (required, kept in the audit log)</label>
              <input type="text" id={`accept-${id}`} name="accept_warnings" required maxlength={MAX_REASON} />{' '}
            </>
          )}
          <button type="submit">Approve {version.ref}</button>
        </form>
        <form method="post" action={action('withdraw')}>
          {hidden}
          <label for={`withdraw-reason-${id}`}>Reason for withdrawing (optional)</label>
          <input type="text" id={`withdraw-reason-${id}`} name="reason" maxlength={MAX_REASON} />{' '}
          <button class="danger" type="submit">
            Withdraw {version.ref}
          </button>
        </form>
      </div>
    );
  }
  if (version.status === 'approved') {
    return (
      <div class="actions">
        <form method="post" action={action('retire')}>
          {hidden}
          <label for={`retire-reason-${id}`}>Reason for retiring (required, kept in the audit log)</label>
          <input type="text" id={`retire-reason-${id}`} name="reason" required maxlength={MAX_REASON} />{' '}
          <button class="danger" type="submit">
            Retire {version.ref}
          </button>
        </form>
      </div>
    );
  }
  return null;
}

export function FitSection({ v, fit }: { v: Pick<VersionDetail, 'ref' | 'content'>; fit: FitReport | null }) {
  const table = v.content.table;
  if (!fit) {
    const shown = table && decimateTable(table);
    return (
      <>
        <h2>Measured table</h2>
        <p class="muted">No model was fitted to this version: between its wavelengths the table is interpolated.</p>
        {shown && (
          <Plot
            svg={nkPlot(`${v.ref}: measured n and k`, { wavelength_nm: shown.wavelengthNm, n: shown.n, k: shown.k }, 'measured')}
            label={`Measured n and k of ${v.ref} against wavelength`}
          />
        )}
      </>
    );
  }
  const [lo, hi] = fit.range_nm;
  return (
    <>
      <h2>Model: {fit.model}</h2>
      {table ? (
        <Plot
          svg={fitPlot(table, fit, `${v.ref}: measured vs ${fit.model}, with residuals`)}
          label={`Measured n and k against the ${fit.model} model, and residuals`}
        />
      ) : (
        <Plot
          svg={nkPlot(
            `${v.ref}: the ${fit.model} model (no table stored)`,
            { wavelength_nm: curveGrid(lo, hi), ...evaluateFitReport(fit, curveGrid(lo, hi)) },
            fit.model,
          )}
          label={`n and k of the ${fit.model} model of ${v.ref} against wavelength`}
        />
      )}
      <FitDetails fit={fit} />
    </>
  );
}

/** Parameters ± 1σ, statistics, correlation and fit warnings: the same report the CLI prints. */
export function FitDetails({ fit, warnings = true }: { fit: FitReport; warnings?: boolean }) {
  const s = fit.statistics;
  return (
    <>
      {warnings && <Notes kind="warn" items={fit.warnings ?? []} />}
      <table>
        <caption>Fitted parameters (± 1σ standard error)</caption>
        <Head columns={['Parameter', 'Value#', '± 1σ#', 'Unit', 'Note']} />
        <tbody>
          {Object.entries(fit.parameters).map(([name, p]) => (
            <tr>
              <th scope="row">
                <code>{name}</code>
              </th>
              <td class="num">{fmt(p.value)}</td>
              <td class="num">{p.stderr === null || p.stderr === undefined ? '—' : fmt(p.stderr, 2)}</td>
              <td>{p.unit}</td>
              <td>{p.at_bound ? 'ended on a bound (no error bar)' : p.stderr === null ? 'held fixed' : ''}</td>
            </tr>
          ))}
        </tbody>
      </table>
      {s && (
        <p class="muted">
          {s.points} residuals; RMS n {fmt(s.rms_n, 3)}, RMS k {fmt(s.rms_k, 3)}
          {s.reduced_chi2 !== null && s.reduced_chi2 !== undefined && `; reduced χ² ${fmt(s.reduced_chi2, 3)}`}; fitted over {fmt(fit.range_nm[0])}–
          {fmt(fit.range_nm[1])} nm.
        </p>
      )}
    </>
  );
}

const VERDICT_NOTE: Record<string, 'good' | 'bad' | 'warn'> = { consistent: 'good', inconsistent: 'bad' };

export function KkSection({ kk }: { kk: KkReport | null }) {
  if (!kk) {
    return (
      <>
        <h2>Kramers-Kronig check</h2>
        <p class="muted">No Kramers-Kronig check is stored with this version.</p>
      </>
    );
  }
  const plot = kkPlot(kk);
  return (
    <>
      <h2>Kramers-Kronig check</h2>
      <Note kind={VERDICT_NOTE[kk.verdict] ?? 'warn'}>
        <span class="verdict">verdict {kk.verdict}.</span> {kk.summary}
      </Note>
      {plot && <Plot svg={plot} label="Measured n against the n reconstructed from k by Kramers-Kronig, and their difference" />}
    </>
  );
}

/** What a reviewer must see before deciding (service/review.ts `ReviewSummary`), in the service's words. */
export function ReviewFindings({ review }: { review: ReviewSummary }) {
  const kk = review.kk;
  const kkKind = kk.verdict === 'consistent' ? 'good' : kk.verdict === 'inconsistent' ? 'bad' : 'warn';
  const p = review.provenance;
  return (
    <>
      <p>
        By {p.created_by}, <When at={p.created_at} />. Sample {p.sample ?? 'not recorded'}; instrument {p.instrument ?? 'not recorded'}; method{' '}
        {p.method ?? 'not recorded'}; measured {p.measured_on ?? 'on an unrecorded date'} by {p.operator ?? 'an unrecorded operator'}; source file{' '}
        {p.source_file ?? 'not recorded'}.
      </p>
      <Note kind={kkKind}>
        <span class="verdict">Kramers-Kronig verdict {kk.verdict}.</span> {kk.summary ?? 'No Kramers-Kronig check is stored with this version.'}
      </Note>
      {review.fit ? (
        <>
          <Note kind={review.fit.converged ? 'good' : 'bad'}>
            the {review.fit.model} fit {review.fit.converged ? 'converged' : 'did not converge'}
            {review.fit.iterations !== null && ` (${review.fit.iterations} iterations)`}; RMS n {fmt(review.fit.rms_n, 3)}, RMS k{' '}
            {fmt(review.fit.rms_k, 3)}.
          </Note>
          {review.fit.diagnostics.map((d) => (
            <Note kind="warn">
              {d.message}
              {d.advice && ` — ${d.advice}`}
            </Note>
          ))}
        </>
      ) : (
        <Note kind="info">no model was fitted: the table is interpolated.</Note>
      )}
      {/* The fit's own diagnostics usually already name the correlated pairs; say it once. */}
      {review.correlations.pairs.length > 0 && !review.fit?.diagnostics.some((d) => d.rule.includes('correlat')) && (
        <Note kind="warn">
          strongly correlated (|r| ≥ {review.correlations.threshold}):{' '}
          {review.correlations.pairs.map((c) => `${c.a}/${c.b} r = ${fmt(c.r, 3)}`).join('; ')} — their separate values are poorly determined.
        </Note>
      )}
    </>
  );
}
