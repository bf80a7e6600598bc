/**
 * Renders every plot the project makes (test/plot/project-plots.ts) to PNG with rsvg-convert (Debian package
 * librsvg2-bin; .ci/run installs it), for people to look at: test-output/plots/<name>.svg and .png (ignored by
 * git). Checks that librsvg reads each document without a complaint and draws it at the document's size.
 * Without rsvg-convert the test is skipped and says why.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { projectPlots, type ProjectPlot } from './project-plots.ts';

const OUT = new URL('../../test-output/plots/', import.meta.url).pathname;
const rsvg = spawnSync('rsvg-convert', ['--version'], { encoding: 'utf8' });
const available = rsvg.status === 0;
if (!available) console.warn('rsvg-convert not found: PNG rendering of the plots skipped (install the Debian package librsvg2-bin)');

/** Width and height from a PNG's IHDR chunk (PNG specification, ISO/IEC 15948 §11.2.2). */
function pngSize(png: Buffer): { width: number; height: number } {
  expect(png.subarray(0, 8).toString('hex')).toBe('89504e470d0a1a0a');
  expect(png.subarray(12, 16).toString('latin1')).toBe('IHDR');
  return { width: png.readUInt32BE(16), height: png.readUInt32BE(20) };
}

describe.skipIf(!available)(
  `plots rendered to PNG in test-output/plots (${available ? rsvg.stdout.trim() : 'skipped: rsvg-convert not found, install librsvg2-bin'})`,
  () => {
    let plots: ProjectPlot[];
    beforeAll(async () => {
      plots = await projectPlots();
      mkdirSync(OUT, { recursive: true });
    }, 60_000);

    it('every plot renders without a warning at the size the document declares', () => {
      for (const plot of plots) {
        const svgPath = `${OUT}${plot.name}.svg`;
        const pngPath = `${OUT}${plot.name}.png`;
        writeFileSync(svgPath, plot.svg);
        const run = spawnSync('rsvg-convert', ['--background-color', 'white', '-o', pngPath, svgPath], { encoding: 'utf8' });
        expect(run.status, `${plot.name}: ${run.stderr}`).toBe(0);
        expect(run.stderr, plot.name).toBe('');
        const declared = plot.svg.match(/<svg [^>]*width="(\d+)" height="(\d+)"/)!;
        expect(pngSize(readFileSync(pngPath))).toEqual({ width: Number(declared[1]), height: Number(declared[2]) });
      }
    }, 60_000);
  },
);
