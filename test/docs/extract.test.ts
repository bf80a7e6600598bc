/** The doc test's extraction of command examples from Markdown (examples.ts). */
import { describe, expect, it } from 'vitest';
import { extractExamples } from './examples.ts';

const doc = [
  'Run `nkledger list` inline: not a line of its own.',
  'nkledger list --db lab.db',
  '```sh',
  '# a comment line is not an example',
  'npx nkledger eval x.csv --at 400:800:50 --json   # {"n": …}',
  'nkledger kk bump.csv --json   # inconsistent (exit 3)',
  'curl -s "$API/materials" | head   # (needs a running server)',
  'nkledger token revoke \\',
  '    tok_1234   # (placeholder)',
  '```',
  '```sh',
  '# (runs until Ctrl-C): the whole block',
  'npm start',
  '```',
  '```json',
  '{"nkledger": 1}',
  '```',
].join('\n');

describe('extractExamples', () => {
  it('takes sh lines and nkledger lines, joins continuations, reads markers and stated exit codes', () => {
    const ex = extractExamples('doc.md', doc);
    expect(ex.map((e) => [e.line, e.command, e.argv, e.marker, e.expectedExit])).toEqual([
      [2, 'nkledger list --db lab.db', ['nkledger', 'list', '--db', 'lab.db'], null, 0],
      [5, 'npx nkledger eval x.csv --at 400:800:50 --json', ['npx', 'nkledger', 'eval', 'x.csv', '--at', '400:800:50', '--json'], null, 0],
      [6, 'nkledger kk bump.csv --json', ['nkledger', 'kk', 'bump.csv', '--json'], null, 3],
      [7, 'curl -s "$API/materials" | head', null, '(needs a running server)', 0],
      [8, 'nkledger token revoke tok_1234', ['nkledger', 'token', 'revoke', 'tok_1234'], '(placeholder)', 0],
      [13, 'npm start', ['npm', 'start'], '(runs until Ctrl-C)', 0],
    ]);
  });
});
