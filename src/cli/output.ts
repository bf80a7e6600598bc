/** Rendering helpers shared by CLI commands; they write through the current run's io (io.ts). */
import { cliIo } from './io.ts';

export function printJson(value: unknown): void {
  cliIo().stdout.write(`${JSON.stringify(value, null, 2)}\n`);
}

export function printLines(lines: string[]): void {
  cliIo().stdout.write(`${lines.join('\n')}\n`);
}

export function printWarnings(warnings: string[]): void {
  for (const w of warnings) cliIo().stderr.write(`warning: ${w}\n`);
}

/** A plain-text table with aligned columns (first column left-aligned, the rest right-aligned). */
export function formatTable(header: string[], rows: string[][]): string[] {
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => (r[i] ?? '').length)));
  const line = (cells: string[]) =>
    cells
      .map((c, i) => (i === 0 ? c.padEnd(widths[i]) : c.padStart(widths[i])))
      .join('  ')
      .trimEnd();
  return [line(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(line)];
}
