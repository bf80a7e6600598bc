/** Text rendering of the review summary (src/service/review.ts), shared by `approve` and `review`. */
import type { BlockingFinding, ReviewSummary } from '../service/review.ts';
import { shortTime } from './registry-output.ts';

const fmt = (x: number | null | undefined, digits = 4): string => (typeof x === 'number' && Number.isFinite(x) ? x.toPrecision(digits) : '–');

/** The KK line: verdict and misfit. */
function kkLine(review: ReviewSummary): string {
  const { verdict, misfit, summary } = review.kk;
  if (verdict === 'not-run') return 'not run (no KK report stored)';
  const numbers = misfit
    ? ` (rms Δn ${fmt(misfit.rms_dn, 2)}, max Δn ${fmt(misfit.max_dn, 2)}${misfit.worst_nm === null ? '' : ` at ${fmt(misfit.worst_nm, 4)} nm`}, tolerance ${fmt(misfit.tolerance, 2)})`
    : '';
  return `${verdict}${numbers}${summary && verdict !== 'consistent' ? `: ${summary}` : ''}`;
}

/** How the CLI says what a blocking finding needs. */
export function blockingLine(b: BlockingFinding): string {
  return `${b.message} [${b.rule}]`;
}

/** The review summary as indented lines, headed by the ref. */
export function reviewLines(review: ReviewSummary): string[] {
  const lines = [`review of ${review.ref} (${review.status}, sha256:${review.sha256.slice(0, 12)}…)`];
  const row = (label: string, text: string) => lines.push(`  ${label.padEnd(13)}${text}`);
  row('KK check', kkLine(review));
  const fit = review.fit;
  if (fit === null) row('fit', 'none (table only)');
  else {
    const iterations = fit.iterations === null ? '' : ` after ${fit.iterations} iterations`;
    row('fit', `${fit.model}, ${fit.converged ? 'converged' : 'NOT converged'}${iterations}; rms n ${fmt(fit.rms_n, 2)}, rms k ${fmt(fit.rms_k, 2)}`);
    for (const d of fit.diagnostics) row('  warning', `${d.message}${d.advice ? `; ${d.advice}` : ''} [${d.rule}]`);
  }
  const pairs = review.correlations.pairs;
  row(
    'correlations',
    pairs.length === 0
      ? `none with |r| ≥ ${review.correlations.threshold}`
      : `|r| ≥ ${review.correlations.threshold}: ${pairs.map((p) => `${p.a}/${p.b} r=${p.r.toFixed(3)}`).join(', ')}`,
  );
  const p = review.provenance;
  const measured = [
    p.sample && `sample ${p.sample}`,
    p.instrument && `instrument ${p.instrument}`,
    p.method && `method ${p.method}`,
    p.operator && `operator ${p.operator}`,
    p.measured_on && `measured ${p.measured_on}`,
  ].filter(Boolean);
  row('provenance', measured.length ? measured.join(', ') : 'no sample, instrument or operator recorded');
  row('source', p.source_file ? `${p.source_file} sha256:${p.source_sha256?.slice(0, 12) ?? '?'}…` : 'no source file recorded');
  row('created', `${shortTime(p.created_at)} by ${p.created_by}`);
  if (review.blocking.length === 0) row('blocking', 'nothing');
  else for (const b of review.blocking) row('BLOCKING', blockingLine(b));
  return lines;
}
