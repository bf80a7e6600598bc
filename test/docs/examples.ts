/**
 * Command examples of the documentation, for the doc test (examples.test.ts): every line of a ```sh or ```bash
 * block (a trailing `\` joins the next line; comment-only lines are not examples), and every line elsewhere
 * that starts with `nkledger` or `npx nkledger`.
 *
 * An example that cannot run unattended carries one of MARKERS in its trailing `#` comment, or the block
 * carries it on a comment line of its own (then it covers every line of the block). `(exit N)` in the comment
 * states an exit code other than 0. The list is documented in DEVELOPERS.md ("Doc test").
 */
import { parse } from 'shell-quote';

export const MARKERS = {
  '(runs until Ctrl-C)': 'starts a server that runs until stopped (npm start, nkledger serve, nkledger demo)',
  '(needs a running server)': 'talks to a running nkledger server (curl against the HTTP API)',
  '(placeholder)': 'names something the reader replaces: their own file, token id, path or host',
  '(takes minutes)': 'runs for minutes: the test suite, a soak, a long benchmark',
  '(needs PostgreSQL)': 'names a PostgreSQL server the reader has (the doc test starts none for the documents)',
} as const;
export type Marker = keyof typeof MARKERS;

export interface DocExample {
  file: string;
  line: number;
  /** The command as written, continuation lines joined, without the trailing comment. */
  command: string;
  /** Words as a shell would split them; null when the line needs a shell (pipes, redirections, variables, &&). */
  argv: string[] | null;
  marker: Marker | null;
  expectedExit: number;
}

const NKLEDGER_LINE = /^\s*(npx\s+)?nkledger(\s|$)/;

function commentOf(text: string): string {
  const words = parse(text, (name) => `$${name}`);
  const last = words[words.length - 1];
  return typeof last === 'object' && last !== null && 'comment' in last ? last.comment : '';
}

function markerIn(comment: string): Marker | null {
  return (Object.keys(MARKERS) as Marker[]).find((m) => comment.includes(m)) ?? null;
}

function example(file: string, line: number, text: string, blockMarker: Marker | null): DocExample {
  const words = parse(text, (name) => `$${name}`);
  const comment = commentOf(text);
  const plain = words.filter((w) => !(typeof w === 'object' && w !== null && 'comment' in w));
  const simple = plain.every((w) => typeof w === 'string' && !w.includes('$')) && !/^\s*\w+=/.test(text);
  const hash = text.search(/\s#\s|\s#$/);
  const command = (comment && hash >= 0 ? text.slice(0, hash) : text).trim();
  const exit = /\(exit (\d+)\)/.exec(comment);
  return {
    file,
    line,
    command,
    argv: simple ? (plain as string[]) : null,
    marker: markerIn(comment) ?? blockMarker,
    expectedExit: exit ? Number(exit[1]) : 0,
  };
}

/** The examples of one Markdown document, in order. */
export function extractExamples(file: string, markdown: string): DocExample[] {
  const lines = markdown.split('\n');
  const out: DocExample[] = [];
  for (let i = 0; i < lines.length; i++) {
    const fence = /^\s*```\s*([\w-]*)/.exec(lines[i]);
    if (!fence) {
      if (NKLEDGER_LINE.test(lines[i])) out.push(example(file, i + 1, lines[i], null));
      continue;
    }
    const shell = fence[1] === 'sh' || fence[1] === 'bash';
    const body: { line: number; text: string }[] = [];
    for (i++; i < lines.length && !/^\s*```/.test(lines[i]); i++) {
      const start = i;
      let text = lines[i];
      while (text.endsWith('\\') && i + 1 < lines.length) text = `${text.slice(0, -1).trimEnd()} ${lines[++i].trim()}`;
      body.push({ line: start + 1, text });
    }
    const blockMarker = shell ? (body.map((b) => (/^\s*#/.test(b.text) ? markerIn(b.text) : null)).find((m) => m) ?? null) : null;
    for (const b of body) {
      if (!b.text.trim() || /^\s*#/.test(b.text)) continue;
      if (shell || NKLEDGER_LINE.test(b.text)) out.push(example(file, b.line, b.text, blockMarker));
    }
  }
  return out;
}
