/** `nkledger stack DESIGN.json --at …`: R, T, A, Ψ, Δ and colour of a thin-film design from pinned materials. */
import { writeFile } from 'node:fs/promises';
import type { Command } from 'commander';
import { Option } from 'commander';
import { readLockfile } from '../../service/lock.ts';
import { readSource } from '../../service/source.ts';
import { runStackRequest, STACK_POLARIZATIONS, type StackReport } from '../../service/stack.ts';
import { renderStackPlot } from '../../service/stack-plot.ts';
import type { Colour } from '../../stack/colour.ts';
import { addRegistryOptions, registryOps, serverUrlOf, type RegistryFlags } from '../registry-access.ts';
import { guarded } from '../failure.ts';
import { cliIo } from '../io.ts';
import { formatTable, printJson, printLines } from '../output.ts';
import { printResolution } from '../registry-output.ts';

interface StackFlags extends RegistryFlags {
  at: string;
  angle?: string;
  polarization?: string;
  lock?: string;
  json?: boolean;
  plot?: string;
  sweep?: string;
  extrapolate?: boolean;
}

export function register(program: Command): void {
  addRegistryOptions(program.command('stack'), "registry database for the design's registry refs")
    .description('reflectance, transmittance, absorptance, ellipsometric Ψ/Δ and colour of a thin-film stack design (transfer-matrix method)')
    .argument('<design>', 'stack design file (JSON; schema in schemas/stack-design.schema.json), or - for standard input')
    .requiredOption('--at <nm>', 'wavelengths in nm: a list 450,550 and/or grids start:stop:step such as 380:780:1')
    .option('--angle <deg>', 'angles of incidence in the ambient, degrees, comma-separated (default 0)')
    .addOption(
      new Option('--polarization <pol>', 'R, T, A and colour for this polarization').choices([...STACK_POLARIZATIONS]).default('unpolarized'),
    )
    .option('--lock <file>', "resolve the design's registry refs through this lockfile (refused when they disagree)")
    .option('--sweep <layer=start:stop:step>', 'colour against the thickness of one layer (1-based, from the ambient side; nm), e.g. 1=0:600:5')
    .option('--extrapolate', 'evaluate model sources outside their validity range (tables are never extrapolated)')
    .option(
      '--json',
      'print {"design", "materials", "results": [{"angle_deg", "wavelength_nm", "R", "T", "A", "Rs", "Rp", "Ts", "Tp", "psi_deg", "delta_deg", "colour"}]}',
    )
    .option('--plot <file.svg>', 'write an SVG: R, T, A, Ψ and Δ against wavelength, or with --sweep the colour strip along the thickness')
    .addHelpText(
      'after',
      '\nR, T, A are fractions (0–1) in JSON and percent in the text output. Colour: CIE 1931 2° observer, illuminant D65,\n' +
        'computed on 380–780 nm at 5 nm whatever --at says. Ψ, Δ: Azzam & Bashara convention, N = n − ik, Δ in [0, 360).\n\n' +
        'Examples:\n  nkledger stack data/marrowick/ar-coating.stack.json --at 400:800:10\n' +
        '  nkledger stack data/marrowick/ar-coating.stack.json --at 550 --angle 0,45,70 --json\n' +
        '  nkledger stack data/marrowick/water-film.stack.json --at 550 --sweep 1=0:1000:5 --plot film-colours.svg',
    )
    .action(
      guarded(async (designPath: string, opts: StackFlags) => {
        const { bytes, file } = await readSource(designPath, { maxBytes: 8 * 1024 * 1024 }, designPath === '-' ? cliIo().stdin : undefined);
        // In server mode the design's registry refs are fetched from the server; the stack is computed here.
        const loadVersion = serverUrlOf(opts) === undefined ? undefined : registryOps(opts).loadVersion;
        const report = await runStackRequest({
          design: Buffer.from(bytes).toString('utf8'),
          designFile: file,
          at: opts.at,
          options: { angle: opts.angle, polarization: opts.polarization, sweep: opts.sweep, extrapolate: opts.extrapolate },
          resolve: { db: opts.db, loadVersion, allowFiles: true },
          lock: () => (opts.lock ? { lockfile: readLockfile(opts.lock), file: opts.lock } : undefined),
        });
        printResolution({ notices: report.notices, warnings: report.warnings });
        if (opts.plot) await writeFile(opts.plot, renderStackPlot(report));
        if (opts.json) return printJson(report);
        printLines(textReport(report, opts.plot));
      }),
    );
}

/** Percent with 3 decimals; rounding noise such as A = −1e-17 of a lossless stack prints as 0.000, not −0.000. */
const pct = (v: number) => (100 * v).toFixed(3).replace(/^-(0\.0+)$/, '$1');
const colourLine = (what: string, c: Colour) =>
  `  ${what.padEnd(12)} x ${c.x === null ? '-' : c.x.toFixed(4)}  y ${c.y === null ? '-' : c.y.toFixed(4)}  Y ${c.Y.toFixed(2)}  L*a*b* ${c.L.toFixed(1)} ${c.a.toFixed(1)} ${c.b.toFixed(1)}  ${c.srgb_hex}${c.in_gamut ? '' : ' (outside sRGB, clipped)'}`;

function textReport(report: StackReport, plot?: string): string[] {
  const lines = [
    `${report.design.name ?? report.design.file} — ${report.design.layers} layer${report.design.layers === 1 ? '' : 's'}, ${report.options.polarization}`,
  ];
  const roleWidth = Math.max(10, ...report.materials.map((m) => m.role.length)); // mixture parts have long roles
  for (const m of report.materials) {
    const pin =
      m.source === 'registry'
        ? `${m.ref} sha256:${m.sha256!.slice(0, 12)}… (${m.status})`
        : m.source === 'file'
          ? `${m.ref} sha256:${m.sha256!.slice(0, 12)}…`
          : '';
    lines.push(`  ${m.role.padEnd(roleWidth)} ${m.describe}${pin ? `, ${pin}` : ''}`);
  }
  for (const note of report.notes) lines.push(`note: ${note}`);
  for (const r of report.results) {
    lines.push('', `angle of incidence ${r.angle_deg}°`);
    const rows = r.wavelength_nm.map((w, i) => [
      String(w),
      pct(r.R[i]),
      pct(r.T[i]),
      pct(r.A[i]),
      r.psi_deg[i].toFixed(3),
      r.delta_deg[i].toFixed(3),
    ]);
    lines.push(...formatTable(['wavelength (nm)', 'R (%)', 'T (%)', 'A (%)', 'Ψ (°)', 'Δ (°)'], rows));
    if (r.colour) lines.push('colour (D65, 2°):', colourLine('reflected', r.colour.reflected), colourLine('transmitted', r.colour.transmitted));
    else lines.push('colour: not available (see the warning)');
    if (r.sweep) {
      lines.push('', `reflected colour against the thickness of ${r.sweep.layer_role}:`);
      const sweepRows = r.sweep.rows.map((row) => [
        String(row.thickness_nm),
        row.reflected.x?.toFixed(4) ?? '-',
        row.reflected.y?.toFixed(4) ?? '-',
        row.reflected.Y.toFixed(2),
        row.reflected.L.toFixed(1),
        row.reflected.a.toFixed(1),
        row.reflected.b.toFixed(1),
        row.reflected.srgb_hex,
      ]);
      lines.push(...formatTable(['thickness (nm)', 'x', 'y', 'Y', 'L*', 'a*', 'b*', 'sRGB'], sweepRows));
    }
  }
  if (plot) lines.push('', `plot written to ${plot}`);
  return lines;
}
