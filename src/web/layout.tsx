/** @jsxImportSource hono/jsx */
/**
 * The frame every page shares (head, navigation, who is signed in, footer) and the small parts pages
 * repeat: status labels (a word and a mark, never colour alone), notes, plots, numbers.
 */
import type { Child } from 'hono/jsx';
import { raw } from 'hono/html';
import type { Wording } from '../errors.ts';
import type { VersionStatus } from '../registry/types.ts';
import { roleAllows } from '../service/tokens.ts';
import type { WebSession } from '../service/web-sessions.ts';
import { SCRIPT_PATH, STYLESHEET_PATH } from './assets.ts';

export type NavKey = 'materials' | 'compare' | 'review' | 'upload' | 'sign-in' | 'none';

export interface LayoutProps {
  title: string;
  session: WebSession | null;
  current: NavKey;
  children?: Child;
}

export function Layout({ title, session, current, children }: LayoutProps) {
  const link = (key: NavKey, href: string, text: string) => (
    <li>
      <a href={href} aria-current={current === key ? 'page' : undefined}>
        {text}
      </a>
    </li>
  );
  const role = session?.principal.role;
  return (
    <html lang="en">
      <head>
        <meta charset="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <title>{`${title} · nkledger`}</title>
        <link rel="icon" href="data:," />
        <link rel="stylesheet" href={STYLESHEET_PATH} />
        <script src={SCRIPT_PATH} defer></script>
      </head>
      <body>
        <a class="skip" href="#content">
          Skip to content
        </a>
        <header class="top">
          <a class="brand" href="/">
            nkledger <span>optical constants register</span>
          </a>
          <nav aria-label="Main">
            <ul>
              {link('materials', '/', 'Materials')}
              {link('compare', '/compare', 'Compare')}
              {role && roleAllows(role, 'approver') && link('review', '/review', 'Review')}
              {role && roleAllows(role, 'editor') && link('upload', '/upload', 'Upload')}
            </ul>
          </nav>
          <div class="who">
            {session ? (
              <>
                <span>
                  Signed in as <strong>{session.principal.user}</strong> ({session.principal.role})
                </span>
                <form class="inline" method="post" action="/sign-out">
                  <input type="hidden" name="csrf" value={session.csrf} />
                  <button class="quiet" type="submit">
                    Sign out
                  </button>
                </form>
              </>
            ) : (
              <a href="/sign-in" aria-current={current === 'sign-in' ? 'page' : undefined}>
                Sign in
              </a>
            )}
          </div>
        </header>
        <main id="content">{children}</main>
        <footer>
          Fitted constants are not a certification. Where these values feed laser-safety, medical or other safety-critical design, verify them by
          measurement and follow the applicable standards and qualified review.
        </footer>
      </body>
    </html>
  );
}

/** How a refusal's remedies and options read on a page: the form field, and the value to put in it. */
export const PAGE_WORDING: Wording = {
  remedy: (r) => (r.value === undefined ? `the “${r.option}” field` : `the “${r.option}” field set to ${String(r.value)}`),
  option: (name) => `the “${name}” field`,
};

/** A page as the HTML text the server sends. */
export function page(props: LayoutProps): string {
  return `<!doctype html>${String(Layout(props))}`;
}

const STATUS_MARK: Record<VersionStatus, string> = { approved: '✓', draft: '✎', retired: '⌀', withdrawn: '✗' };

/** A version's status: the word itself plus a mark, coloured only as a help. */
export function Status({ status }: { status: VersionStatus }) {
  return (
    <span class={`status status-${status}`}>
      <span aria-hidden="true">{STATUS_MARK[status]} </span>
      {status}
    </span>
  );
}

export type NoteKind = 'warn' | 'bad' | 'good' | 'info';
const NOTE_WORD: Record<NoteKind, string> = { warn: 'Warning:', bad: 'Problem:', good: 'OK:', info: 'Note:' };

/** A note whose kind is said in words (Warning:, Problem: …), not only by its colour. */
export function Note({ kind, children }: { kind: NoteKind; children?: Child }) {
  return (
    <div class={`note note-${kind}`} role={kind === 'bad' ? 'alert' : undefined}>
      <strong>{NOTE_WORD[kind]}</strong>
      {children}
    </div>
  );
}

export function Notes({ kind, items }: { kind: NoteKind; items: string[] }) {
  return (
    <>
      {items.map((text) => (
        <Note kind={kind}>{text}</Note>
      ))}
    </>
  );
}

/**
 * An SVG plot made by src/plot, placed inline (its <title> names it for screen readers). The SVG text is
 * built by the plot module, which escapes every label, so it goes in as it is, minus the XML declaration.
 */
export function Plot({ svg, label }: { svg: string; label: string }) {
  const body = svg.replace(/^<\?xml[^>]*>\s*/, '').replace('<svg ', `<svg role="img" aria-label="${escapeAttribute(label)}" `);
  return <figure class="plot">{raw(body)}</figure>;
}

function escapeAttribute(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/"/g, '&quot;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

/** A number for people: 6 significant digits, no trailing zeros of a fixed format. */
export function fmt(value: number | null | undefined, digits = 6): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  if (value === 0) return '0';
  const abs = Math.abs(value);
  if (abs >= 1e-3 && abs < 1e6) return String(Number(value.toPrecision(digits)));
  return value.toExponential(Math.max(0, digits - 1)).replace(/\.?0+e/, 'e');
}

/** A table's header row: column names; a name ending in "#" is numeric (right-aligned). */
export function Head({ columns }: { columns: string[] }) {
  return (
    <thead>
      <tr>
        {columns.map((c) =>
          c.endsWith('#') ? (
            <th scope="col" class="num">
              {c.slice(0, -1)}
            </th>
          ) : (
            <th scope="col">{c}</th>
          ),
        )}
      </tr>
    </thead>
  );
}

/** A date-time as stored (ISO 8601 UTC), shown to the minute, in a <time> element. */
export function When({ at }: { at: string | null }) {
  if (!at) return <span class="muted">—</span>;
  return <time datetime={at}>{`${at.slice(0, 10)} ${at.slice(11, 16)} UTC`}</time>;
}

/** The path of a version's page. */
export function versionPath(ref: string): string {
  const at = ref.lastIndexOf('@');
  return `/materials/${encodeURIComponent(ref.slice(0, at))}/versions/${ref.slice(at + 1)}`;
}
