import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import type { EqualizerDiagnostics } from '@intradyne/core';
import { type Browser, chromium, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FileAnalysis } from '../../src/analysis/analyze-file.js';
import { analysisReport } from '../../src/report/analysis-report.js';
import { sweepReport } from '../../src/report/sweep-report.js';
import { writeReport } from '../../src/report/write-report.js';
import type { SweepRow } from '../../src/sweep/result-row.js';
import { fixtureRows, HOSTILE_NAME, HOSTILE_NOTES, hostileAnalysis } from '../support/report-inputs.js';

/** Debian's chromium package (the CI script installs it). */
const CHROMIUM = '/usr/bin/chromium';
const ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

/** What happened while a report was open: errors, requests other than the page itself, and the page. */
interface Visit {
  readonly page: Page;
  readonly errors: string[];
  readonly requests: string[];
}

// The report is opened from a file:// URL in headless Chromium. It must load
// nothing, print no error, carry the expected marks in every plot, and show
// a capture name and notes made of markup as text.
describe('the report in a browser', () => {
  let browser: Browser;
  let dir: string;
  let analysis: FileAnalysis;
  let rows: SweepRow[];
  const visits: Visit[] = [];

  beforeAll(async () => {
    // Fail, not skip, without the browser: the report's checks need it.
    expect(existsSync(CHROMIUM), `${CHROMIUM} is missing: install Debian's chromium (bash .ci/run does)`).toBe(true);
    dir = mkdtempSync(join(tmpdir(), 'intradyne-report-'));
    mkdirSync(join(dir, 'capture'));
    analysis = hostileAnalysis(join(dir, 'capture'));
    rows = fixtureRows();
    browser = await chromium.launch({ executablePath: CHROMIUM, args: ARGS });
  });

  afterAll(async () => {
    for (const v of visits) await v.page.close();
    await browser?.close();
    // INTRADYNE_KEEP_SCREENSHOTS=1 keeps the pages and their screenshots for a person to look at.
    if (process.env.INTRADYNE_KEEP_SCREENSHOTS === '1') process.stderr.write(`report pages and screenshots kept in ${dir}\n`);
    else if (dir) rmSync(dir, { recursive: true, force: true });
  });

  async function visit(html: string, name: string): Promise<Visit> {
    // The file name itself is hostile too: the page must not care where it lives.
    const path = join(dir, `${name}.html`);
    writeReport(path, html);
    const url = pathToFileURL(path).href;
    const page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
    const v: Visit = { page, errors: [], requests: [] };
    visits.push(v);
    page.on('console', (m) => {
      if (m.type() === 'error' || m.type() === 'warning') v.errors.push(`${m.type()}: ${m.text()}`);
    });
    page.on('pageerror', (e) => v.errors.push(`page error: ${e.message}`));
    // Every request but the page's own file is counted, and refused.
    await page.route('**/*', (route) => {
      if (route.request().url() === url) return route.continue();
      v.requests.push(route.request().url());
      return route.abort();
    });
    page.on('request', (r) => {
      if (r.url() !== url && !v.requests.includes(r.url())) v.requests.push(r.url());
    });
    await page.goto(url, { waitUntil: 'load' });
    return v;
  }

  const marks = (page: Page, selector: string) => page.locator(selector).count();

  it('opens the analysis report with no error, no request, and every plot with its marks', async () => {
    const v = await visit(analysisReport(analysis), `analysis ${HOSTILE_NAME}`);
    const { page } = v;
    expect(v.errors).toEqual([]);
    expect(v.requests).toEqual([]);
    const h = analysis.result.plotData!.constellation;
    for (const pol of ['x', 'y'] as const) {
      const plot = `svg[data-plot="density"][data-pol="${pol}"]`;
      expect(await marks(page, `${plot} rect.cell`)).toBe(h[pol].filter((c) => c > 0).length);
      expect(await marks(page, `${plot} circle.ideal`)).toBe(16);
    }
    const eq = analysis.result.diagnostics.equalizer as EqualizerDiagnostics;
    expect(await marks(page, 'svg[data-plot="taps"] g.series')).toBe(4);
    for (const f of ['hxx', 'hxy', 'hyx', 'hyy'])
      expect(await marks(page, `svg[data-plot="taps"] g.series[data-series="${f}"] circle.tap`)).toBe(eq.taps);
    for (const kind of ['convergence', 'separation', 'phase'])
      expect(await marks(page, `svg[data-plot="${kind}"] g.series path.line`)).toBe(2);
    expect(await marks(page, 'svg[data-plot="spectrum"] g.series path.line')).toBe(4);
    // Every plot drew its axes and a title, and the table lists the figures.
    expect(await marks(page, 'svg.plot')).toBe(7);
    expect(await marks(page, 'svg.plot rect.frame')).toBe(7);
    expect(await page.locator('#values table.values tr').count()).toBeGreaterThan(50);
    await page.screenshot({ path: join(dir, 'analysis.png'), fullPage: true });
    expect(readFileSync(join(dir, 'analysis.png')).subarray(1, 4).toString()).toBe('PNG');
  });

  it('shows a capture name and notes made of markup as text, running none of it', async () => {
    const { page } = visits[0];
    expect(await page.evaluate(() => (globalThis as { __pwned?: unknown }).__pwned)).toBeUndefined();
    expect(await marks(page, 'img')).toBe(0);
    expect(await marks(page, 'script')).toBe(0);
    expect(await marks(page, '#injected')).toBe(0);
    expect(await page.locator('h1').textContent()).toContain(HOSTILE_NAME);
    expect(await page.locator('header .sub').textContent()).toContain(HOSTILE_NOTES);
  });

  it('opens the sweep report with one dot and one error bar per measured capture', async () => {
    const v = await visit(
      sweepReport(rows, { source: `sweeps/${HOSTILE_NAME}`, library: 'intradyne', version: 'test' }),
      'sweep',
    );
    const { page } = v;
    expect(v.errors).toEqual([]);
    expect(v.requests).toEqual([]);
    const measured = rows.filter((r) => r.ok === true).length;
    expect(await marks(page, 'svg[data-plot="ber"] path.error-bar')).toBe(measured);
    expect(await marks(page, 'svg[data-plot="ber"] circle.point')).toBe(measured);
    // One theory curve per modulation (QPSK, 16QAM, 64QAM) and the hard-decision FEC limit.
    expect(await marks(page, 'svg[data-plot="ber"] g.series[data-series$="theory"] path.line')).toBe(3);
    expect(await marks(page, 'svg[data-plot="ber"] g.rule')).toBe(1);
    expect(await marks(page, 'svg[data-plot="gmi"] circle.point')).toBe(measured);
    expect(await marks(page, 'svg[data-plot="ngmi"] g.rule')).toBe(2);
    expect(await page.locator('#rows tbody tr').count()).toBe(rows.length);
    expect(await page.evaluate(() => (globalThis as { __pwned?: unknown }).__pwned)).toBeUndefined();
    expect(await marks(page, 'img, script, #injected')).toBe(0);
    await page.screenshot({ path: join(dir, 'sweep.png'), fullPage: true });
    expect(readFileSync(join(dir, 'sweep.png')).subarray(1, 4).toString()).toBe('PNG');
  });
});
