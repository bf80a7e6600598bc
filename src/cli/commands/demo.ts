/**
 * `nkledger demo` (what `npm start` runs): a short tour over the bundled, invented Marrowick Optics tables —
 * each file imported from its own messy dialect, summarized, and evaluated at common laser lines.
 */
import { readdir } from 'node:fs/promises';
import { fileURLToPath } from 'node:url';
import type { Command } from 'commander';
import { evaluateTable } from '../../optics/table-eval.ts';
import { inspectReport } from '../../service/inspect.ts';
import { loadTable } from '../../service/source.ts';
import { tableRangeNm } from '../../table.ts';
import { guarded } from '../failure.ts';
import { formatTable, printLines } from '../output.ts';
import { inspectLines } from './inspect.ts';

export const DEMO_DATA_DIR = fileURLToPath(new URL('../../../data/marrowick/', import.meta.url));
/** Wavelengths people ask for: 405 nm diode, 532 nm doubled Nd:YAG, 632.8 nm HeNe, 1064 nm Nd:YAG, 1550 nm telecom. */
const LINES_NM = [405, 532, 632.8, 1064, 1550];
const TABLE_EXTENSIONS = /\.(csv|tsv|txt|dat)$/i;

export async function runDemo(dir = DEMO_DATA_DIR): Promise<string[]> {
  const out = [
    'nkledger demo: tables of the fictional Marrowick Optics coatings lab (INVENTED data, see data/README.md),',
    'each exported in its own dialect, imported, summarized and interpolated at common laser lines.',
    '',
  ];
  const files = (await readdir(dir)).filter((f) => TABLE_EXTENSIONS.test(f)).sort();
  for (const name of files) {
    const imported = await loadTable(`${dir}${name}`, { file: name });
    out.push(...inspectLines(`data/marrowick/${name}`, inspectReport(imported)));
    const [lo, hi] = tableRangeNm(imported.table);
    const at = LINES_NM.filter((w) => w >= lo && w <= hi);
    const { n, k } = evaluateTable(imported.table, at);
    const rows = at.map((w, i) => [String(w), n[i].toFixed(4), k[i].toExponential(2)]);
    out.push('', ...formatTable(['  λ (nm)', 'n', 'k'], rows.map(([w, ...r]) => [`  ${w}`, ...r])), '');
  }
  out.push(
    'Try: npx nkledger inspect data/marrowick/al2o3-ald.csv --json',
    '     npx nkledger eval data/marrowick/a-si-h.txt --at 400:800:100 --interp monotone-cubic',
    '     npx nkledger convert data/marrowick/mgf2-evaporated.csv --to csv --x-unit nm',
  );
  return out;
}

export function register(program: Command): void {
  program
    .command('demo')
    .description('a short tour of nkledger over the bundled, invented Marrowick Optics demo tables (what `npm start` runs)')
    .action(guarded(async () => printLines(await runDemo())));
}
