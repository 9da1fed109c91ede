/**
 * The diagnosis report as a person sees it: rendered in headless Chromium (Debian's `chromium`,
 * driven by playwright-core; no server, the page loads from a file and makes no request), and
 * printed to PDF by the replay command.
 */
import { mkdir, mkdtemp, readFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium, type Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { main } from '../../src/cli/main.js';
import { loadStructureFile } from '../../src/config/load.js';
import { defaultScenario } from '../../simulators/default-scenario.js';
import { captureSink } from '../../simulators/outputs.js';
import { createSimulation } from '../../simulators/run.js';

describe('diagnosis report in a browser', () => {
  let dir: string;
  let browser: Browser;

  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'sw-report-'));
    const structure = await loadStructureFile('config/brannock-mere.yaml');
    const sim = createSimulation(structure, defaultScenario({ seed: 3, start_ms: Date.UTC(2026, 6, 1, 6), duration_s: 90, day_s: 600 }));
    const sink = await captureSink(join(dir, 'capture'));
    for (const scan of sim.scans()) await sink.send(scan);
    await sink.close();
    const quiet = vi.spyOn(process.stderr, 'write').mockImplementation(() => true);
    try {
      const code = await main(['node', 'strainward', 'replay', '--capture', join(dir, 'capture'), '-s', 'config/brannock-mere.yaml',
        '--out', join(dir, 'lp'), '--report', join(dir, 'report.html'), '--report-pdf', join(dir, 'report.pdf')]);
      expect(code).toBe(0);
    } finally {
      quiet.mockRestore();
    }
    browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking'] });
  }, 120_000);

  afterAll(async () => { await browser?.close(); });

  it('renders every plot with visible lines, the safety notice on top, and no page error', async () => {
    const page = await browser.newPage({ viewport: { width: 1200, height: 900 } });
    const errors: string[] = [];
    const requests: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    page.on('request', (r) => { if (!r.url().startsWith('file:')) requests.push(r.url()); });
    await page.goto(`file://${join(dir, 'report.html')}`);
    const notice = await page.locator('body').innerText();
    expect(notice.indexOf('does not replace qualified engineering judgement')).toBeLessThan(400);
    const plots = await page.$$eval('svg', (svgs) => svgs.map((s) => {
      const box = s.getBoundingClientRect();
      return { w: box.width, h: box.height, lines: s.querySelectorAll('polyline, path, rect').length };
    }));
    expect(plots.length).toBeGreaterThan(5);
    for (const p of plots) {
      expect(p.w).toBeGreaterThan(100);
      expect(p.h).toBeGreaterThan(20);
      expect(p.lines).toBeGreaterThan(0);
    }
    // Five groups on the invented deck: each has its own section.
    for (const g of ['web-north-pier', 'web-south-pier', 'flange-north-mid1', 'flange-south-mid1', 'slab-mid1']) {
      expect(await page.locator(`text=${g}`).count(), g).toBeGreaterThan(0);
    }
    // Nothing wider than an A4 page's text (about 720 px): tables and plots fit.
    await page.setViewportSize({ width: 720, height: 900 });
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(720);
    // Screenshots kept for a person to look at (test-artifacts/ is not committed).
    await mkdir('test-artifacts', { recursive: true });
    await page.screenshot({ path: 'test-artifacts/report-top.png' });
    for (const [sel, name] of [['#health', 'report-health'], ['section.group', 'report-group'], ['#fatigue', 'report-fatigue'], ['#fatigue-flange-south-cover-plate-end', 'report-fatigue-chart']] as const) {
      const y = await page.evaluate((s) => document.querySelector(s)!.getBoundingClientRect().top + window.scrollY, sel);
      await page.screenshot({ path: `test-artifacts/${name}.png`, clip: { x: 0, y, width: 720, height: 900 }, fullPage: true });
    }
    expect(errors).toEqual([]);
    expect(requests).toEqual([]);
    await page.close();
  });

  it('prints the same report to a multi-page PDF', async () => {
    const pdf = await readFile(join(dir, 'report.pdf'));
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
    const pages = pdf.toString('latin1').match(/\/Type\s*\/Page[^s]/g) ?? [];
    expect(pages.length).toBeGreaterThan(1);
  });
});
