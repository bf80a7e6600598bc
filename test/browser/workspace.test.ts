/**
 * The browser workspace in a real browser (Debian's chromium driven by playwright-core; `npm run test:browser`).
 * The scenario of the issue: an editor signs in, uploads a file, fits it and stores a draft; an approver in a
 * second browser context finds it under review, sees the checks, approves; an anonymous reader finds it by
 * search, opens it, compares it with the previous version and downloads the CSV, whose bytes equal
 * `nkledger export`. Every page is scanned with axe-core (no serious or critical finding), weighed (first
 * load < 150 KB transferred) and screenshotted to test-output/browser/ for people to look at.
 * Without /usr/bin/chromium the tests are skipped, and say so.
 */
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Browser, BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startServer, type RunningServer } from '../../src/api/server.ts';
import { openRegistry, type Registry } from '../../src/registry/open.ts';
import { buildDemoRegistry, DEMO_APPROVER, DEMO_EDITOR } from '../../src/service/demo-registry.ts';
import { exportVersion } from '../../src/service/export-version.ts';
import { createToken } from '../../src/service/tokens.ts';
import { showVersion } from '../../src/service/versions.ts';
import { createWebPages, forwardToPages } from '../../src/web/app.tsx';

const CHROMIUM = '/usr/bin/chromium';
const HAVE_CHROMIUM = existsSync(CHROMIUM);
const SHOTS = 'test-output/browser';
const PAGE_BUDGET_BYTES = 150 * 1024;

if (!HAVE_CHROMIUM) {
  console.warn(`test:browser: SKIPPED — ${CHROMIUM} is missing (install it with \`apt-get install -y chromium\`; .ci/run does).`);
}

const AXE_SOURCE = readFileSync(createRequire(import.meta.url).resolve('axe-core/axe.min.js'), 'utf8');

describe.skipIf(!HAVE_CHROMIUM)('the browser workspace in chromium', () => {
  let dir: string;
  let registry: Registry;
  let server: RunningServer;
  let browser: Browser;
  const tokens = { editor: '', approver: '' };
  const weights: Record<string, number> = {};

  beforeAll(async () => {
    const { chromium } = await import('playwright-core');
    dir = mkdtempSync(join(tmpdir(), 'nkledger-browser-'));
    registry = await openRegistry(join(dir, 'r.db'));
    await buildDemoRegistry(registry, 'data/marrowick', join(dir, 'design.nklock.json'));
    tokens.editor = (await createToken(registry, { user: DEMO_EDITOR, role: 'editor', createdBy: 'test' })).token;
    tokens.approver = (await createToken(registry, { user: DEMO_APPROVER, role: 'approver', createdBy: 'test' })).token;
    server = await startServer({
      registry,
      host: '127.0.0.1',
      port: 0,
      compute: { threads: 1 },
      extend: (app, shared) => app.all('*', forwardToPages(createWebPages({ registry, ...shared }))),
    });
    browser = await chromium.launch({
      executablePath: CHROMIUM,
      args: [
        '--headless',
        '--no-sandbox',
        '--disable-gpu',
        '--disable-background-networking',
        '--disable-component-update',
        '--disable-sync',
        '--no-first-run',
      ],
      timeout: 30_000,
    });
    mkdirSync(SHOTS, { recursive: true });
  }, 90_000);

  afterAll(async () => {
    await browser?.close();
    await server?.close();
    await registry?.close();
    if (dir) rmSync(dir, { recursive: true, force: true });
    if (Object.keys(weights).length) console.log('first-load bytes transferred per page:', weights);
  });

  /** Errors thrown by the pages' script or refused by the Content-Security-Policy, in any context. */
  const pageErrors: string[] = [];

  /** A fresh context (cookies of its own); bypassCSP only so the test can inject axe-core. */
  const context = async () => {
    const ctx = await browser.newContext({ bypassCSP: true, acceptDownloads: true, viewport: { width: 1200, height: 900 } });
    ctx.on('page', (page) => {
      page.on('pageerror', (err) => pageErrors.push(`${page.url()}: ${err.message}`));
      page.on('console', (msg) => {
        if (msg.type() === 'error') pageErrors.push(`${page.url()}: ${msg.text()}`);
      });
    });
    return ctx;
  };

  /** Go to a page, counting every byte transferred for it (bodies as sent, compressed), then check and photograph it. */
  async function visit(page: Page, path: string, name: string): Promise<void> {
    let transferred = 0;
    const counted: Promise<void>[] = [];
    const onFinished = (request: import('playwright-core').Request) => {
      counted.push(
        request.sizes().then((s) => {
          transferred += s.responseBodySize + s.responseHeadersSize;
        }),
      );
    };
    page.on('requestfinished', onFinished);
    await page.goto(`${server.url}${path}`, { waitUntil: 'load' });
    page.off('requestfinished', onFinished);
    await Promise.all(counted);
    weights[name] = transferred;
    expect(transferred, `${name}: first load`).toBeLessThan(PAGE_BUDGET_BYTES);
    await check(page, name);
  }

  /** axe-core finds nothing serious or critical; then a full-page screenshot. */
  async function check(page: Page, name: string): Promise<void> {
    await page.evaluate(AXE_SOURCE);
    const violations = await page.evaluate(async () => {
      const axe = (window as any).axe;
      const result = await axe.run(document, { resultTypes: ['violations'] });
      return result.violations
        .filter((v: { impact: string }) => v.impact === 'serious' || v.impact === 'critical')
        .map(
          (v: { id: string; impact: string; nodes: { target: string[] }[] }) =>
            `${v.impact} ${v.id}: ${v.nodes.map((n) => n.target.join(' ')).join(', ')}`,
        );
    });
    expect(violations, `${name}: axe-core`).toEqual([]);
    await page.screenshot({ path: join(SHOTS, `${name}.png`), fullPage: true });
  }

  async function signIn(ctx: BrowserContext, token: string): Promise<Page> {
    const page = await ctx.newPage();
    await visit(page, '/sign-in', 'sign-in');
    await page.getByLabel('Your API token').fill(token);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(`${server.url}/`);
    await expect(page.getByText('Signed in as')).toBeTruthy();
    return page;
  }

  it('editor uploads, previews, fits and stores; approver reviews and approves; a reader finds, compares and downloads', async () => {
    // An invented recipe-C nitride: a Cauchy curve with an instrument-style preamble (not a measurement).
    const rows = Array.from({ length: 121 }, (_, i) => 400 + 5 * i).map((nm) => {
      const um = nm / 1000;
      return `${nm},${(1.98 + 0.012 / um ** 2 + 3e-4 / um ** 4).toFixed(6)},0`;
    });
    const file = join(dir, 'sinx-recipe-c.csv');
    writeFileSync(
      file,
      ['Marrowick Optics ellipsometry export (INVENTED test data)', 'Sample: MW-2400', 'Wavelength (nm),n,k', ...rows, ''].join('\n'),
    );

    // Editor.
    const editor = await context();
    const ed = await signIn(editor, tokens.editor);
    await visit(ed, '/upload', 'upload');
    await ed.getByLabel('Material').selectOption('sinx-pecvd');
    await ed.getByLabel(/^File/).setInputFiles(file);
    await ed.getByRole('button', { name: 'Read the file' }).click();
    await ed.waitForURL(/\/upload\/[A-Za-z0-9_-]+$/);
    await expect(ed.getByText('Sample: MW-2400').first()).toBeTruthy();
    expect(await ed.textContent('main')).toContain('121 wavelengths');
    await check(ed, 'upload-preview');
    await ed.getByLabel('Model to fit').selectOption('cauchy');
    await ed.getByRole('button', { name: /Try the fit/ }).click();
    await ed.getByRole('heading', { name: /Trial fit: cauchy/ }).waitFor();
    await check(ed, 'upload-trial-fit');
    await ed.getByLabel('Sample', { exact: true }).fill('MW-2400 wafer 3');
    await ed.getByRole('button', { name: 'Store as draft' }).click();
    await ed.waitForURL(/\/materials\/sinx-pecvd\/versions\/3$/);
    expect((await showVersion(registry, 'sinx-pecvd@3')).status).toBe('draft');
    await check(ed, 'version-draft');

    // Approver, in a second context.
    const approver = await context();
    const ap = await signIn(approver, tokens.approver);
    await visit(ap, '/review', 'review');
    const item = ap.locator('section.review-item', { hasText: 'sinx-pecvd@3' });
    const text = await item.textContent();
    expect(text).toContain('Kramers-Kronig verdict');
    // The checks come before the buttons.
    expect(text!.indexOf('Kramers-Kronig verdict')).toBeLessThan(text!.indexOf('Approve sinx-pecvd@3'));
    await item.getByRole('button', { name: 'Approve sinx-pecvd@3' }).click();
    await ap.waitForURL(`${server.url}/review`);
    expect((await showVersion(registry, 'sinx-pecvd@3')).status).toBe('approved');

    // Anonymous reader.
    const reader = await context();
    const rd = await reader.newPage();
    await visit(rd, '/', 'index');
    await rd.getByLabel('Search name, slug, tags and description').fill('nitride');
    await rd.getByRole('button', { name: 'Search' }).click();
    await rd.waitForURL(/q=nitride/);
    await rd.getByRole('link', { name: 'PECVD silicon nitride' }).click();
    await rd.waitForURL(/\/materials\/sinx-pecvd$/);
    await check(rd, 'material');
    expect(await rd.textContent('main')).toContain('sinx-pecvd@3 is the version to use now');
    await rd.getByLabel('Compare', { exact: true }).selectOption('sinx-pecvd@2');
    await rd.getByLabel('with', { exact: true }).selectOption('sinx-pecvd@3');
    await rd.getByRole('button', { name: 'Compare' }).click();
    await rd.waitForURL(/\/compare\?/);
    expect(await rd.textContent('main')).toContain('Largest |Δn|');
    await check(rd, 'compare');

    await visit(rd, '/materials/sinx-pecvd/versions/3', 'version');
    // The script's plot readout: the wavelength under the pointer.
    await rd.locator('figure.plot svg').first().hover();
    expect(await rd.locator('.plot-readout').first().textContent()).toMatch(/^\d+(\.\d)? nm$/);
    const [download] = await Promise.all([rd.waitForEvent('download'), rd.getByRole('link', { name: /CSV: the measured table/ }).click()]);
    const saved = join(dir, 'downloaded.csv');
    await download.saveAs(saved);
    expect(readFileSync(saved, 'utf8')).toBe((await exportVersion(registry, 'sinx-pecvd@3', 'csv')).text);

    // A version page of a 700-point table with fit and KK plots (the demo's recipe B) within the budget too.
    await visit(rd, '/materials/sinx-pecvd/versions/2', 'version-recipe-b');
    await visit(rd, '/materials/a-si-h/versions/1', 'version-a-si-h');
    for (const c of [editor, approver, reader]) await c.close();
    expect(pageErrors).toEqual([]);
  }, 120_000);

  it('every control is reachable by keyboard, starting with the skip link', async () => {
    const ctx = await context();
    const page = await ctx.newPage();
    await page.goto(`${server.url}/`);
    await page.keyboard.press('Tab');
    expect(await page.evaluate(() => document.activeElement?.textContent?.trim())).toBe('Skip to content');
    const reached = new Set<string>();
    for (let i = 0; i < 40; i++) {
      await page.keyboard.press('Tab');
      reached.add(await page.evaluate(() => document.activeElement?.id || document.activeElement?.textContent?.trim() || ''));
    }
    expect([...reached]).toEqual(expect.arrayContaining(['q', 'tag', 'Search', 'Sign in']));
    await ctx.close();
  }, 60_000);
});
