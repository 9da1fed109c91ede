/**
 * The live page as the person on duty sees it: `npm start` runs as a process (embedded aedes broker,
 * simulator, live job, page on free loopback ports, files in a test folder), and headless Chromium
 * (Debian's `chromium`, driven by playwright-core) opens the page. Screenshots are kept in
 * test-artifacts/. The demo's data is invented; what is checked here is what the page shows and that
 * an acknowledgement from it goes through the processor's own path, not any computed value.
 */
import { mkdir, mkdtemp, readFile, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { chromium, type Browser, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startDemo, type DemoProcess } from '../support/demo-process.js';

const ARTIFACTS = resolve('test-artifacts');
const HEAVY_AT_S = 12;

describe('live page of npm start, in a browser', () => {
  let dir: string;
  let demo: DemoProcess;
  let url: string;
  let browser: Browser;
  let page: Page;

  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'sw-live-page-'));
    // The demo's runtime file, with its files in the test folder.
    const runtime = (await readFile('config/demo.runtime.yaml', 'utf8'))
      .replace(/^structure: .*$/m, `structure: ${resolve('config/brannock-mere.yaml')}`)
      .replaceAll('../var/', './var/');
    await writeFile(join(dir, 'demo.runtime.yaml'), runtime);
    demo = startDemo(process.cwd(), ['--runtime', join(dir, 'demo.runtime.yaml'), '--mqtt-port', '0', '--page-port', '0', '--heavy-at-s', String(HEAVY_AT_S)]);
    url = (await demo.waitFor(/live page\s+(http:\/\/127\.0\.0\.1:\d+\/)/, 30_000))[1];
    await mkdir(ARTIFACTS, { recursive: true });
    browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking'] });
    page = await browser.newPage({ viewport: { width: 1280, height: 1000 } });
  }, 60_000);

  afterAll(async () => {
    await browser?.close();
    await demo?.interrupt();
  }, 60_000);

  it('says what the data is and what the tool is not, on the page and at start-up', async () => {
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    await page.goto(url);
    const text = await page.locator('body').innerText();
    expect(text).toContain('does not replace qualified engineering judgement');
    expect(text).toContain('responsible engineer under the local codes');
    expect(text).toContain('Missing data is itself an alarm');
    await page.waitForFunction(() => document.getElementById('page-notice')?.hidden === false, null, { timeout: 10_000 });
    expect(await page.locator('#page-notice').innerText()).toContain('Simulated data for an invented structure');
    expect(demo.output()).toContain('does not replace qualified engineering judgement');
    expect(demo.output()).toContain('SIMULATED data for an invented structure');
    expect(errors).toEqual([]);
  });

  it('shows every group of the deck, grouped by zone, with values that change', async () => {
    // Cards are painted once near the screen: each is scrolled to, as a person would.
    for (const g of ['web-north-pier', 'web-south-pier', 'flange-north-mid1', 'flange-south-mid1', 'slab-mid1']) {
      await page.locator(`article.group[data-group="${g}"]`).scrollIntoViewIfNeeded();
      await page.locator(`article.group[data-group="${g}"] .when`).filter({ hasText: 'result of' }).waitFor({ timeout: 20_000 });
    }
    await page.evaluate(() => window.scrollTo(0, 0));
    expect(await page.locator('details.zone').evaluateAll((zs) => zs.map((z) => (z as HTMLElement).dataset.zone))).toEqual(['pier', 'span-1']);
    const vm = page.locator('article.group[data-group="web-north-pier"] dl.vals');
    expect(await vm.innerText()).toMatch(/von Mises\s+-?\d+\.\d MPa/);
    const first = await vm.innerText();
    await page.waitForFunction((before) => {
      const now = document.querySelector('article.group[data-group="web-north-pier"] dl.vals')?.textContent;
      return now !== undefined && now !== before;
    }, await vm.evaluate((e) => e.textContent), { timeout: 10_000 });
    expect(await vm.innerText()).not.toBe(first);
    // A trend is drawn: a polyline with points.
    await page.waitForFunction(() => (document.querySelector('article.group[data-group="web-north-pier"] polyline.vm')?.getAttribute('points') ?? '').split(' ').length > 3, null, { timeout: 10_000 });
    // The filter narrows the list.
    await page.fill('#filter', 'slab');
    expect(await page.locator('article.group:visible').count()).toBe(1);
    await page.fill('#filter', '');
    expect(await page.locator('article.group:visible').count()).toBe(5);
    // Instrument health lists every logger, receiving.
    await page.locator('details.logger[data-logger="lg-pier"] summary').filter({ hasText: 'receiving' }).waitFor({ timeout: 10_000 });
    expect(await page.locator('details.logger').count()).toBe(4);
    // Its channels, once opened: reading, unit, range.
    await page.click('details.logger[data-logger="lg-span1"] summary');
    const rows = page.locator('details.logger[data-logger="lg-span1"] table.channels tbody tr');
    await page.waitForFunction(() => document.querySelectorAll('details.logger[data-logger="lg-span1"] table.channels tbody tr').length === 4, null, { timeout: 5_000 });
    expect(await rows.first().innerText()).toMatch(/ch01\s+flange-north-mid1\s+-?\d+\.\d{4} microstrain/);
    expect(await page.locator('#processor-figures').innerText()).toMatch(/messages in \(last 10 s\)\s+\d+\.\d \/s/);
  }, 60_000);

  it('shows the heavy vehicle\'s alarm; a refused acknowledgement says so; an accepted one is in the alarm log with who and why', async () => {
    const row = page.locator('tr.alarm[data-rule="steel-von-mises"]').first();
    await row.waitFor({ timeout: (HEAVY_AT_S + 45) * 1000 });
    const alarmId = await row.getAttribute('data-alarm-id');
    expect(alarmId).toMatch(/^brannock-mere:steel-von-mises:/);
    expect(await row.innerText()).toMatch(/advisory/);
    expect(await row.innerText()).toMatch(/MPa/);

    // Someone the configuration does not list for structural alarms.
    await row.locator('button.ack').click();
    await page.fill('#ack-user', 'visitor-7');
    await page.fill('#ack-reason', 'looked at it');
    await page.click('#ack-submit');
    await page.locator('#ack-dialog-result').filter({ hasText: 'Refused' }).waitFor({ timeout: 20_000 });
    expect(await page.locator('#ack-dialog-result').innerText()).toContain('user_not_allowed');
    await page.click('#ack-cancel');
    expect(await page.locator('#ack-result').innerText()).toContain('Refused');

    await page.screenshot({ path: join(ARTIFACTS, 'live-page-alarm.png'), fullPage: true });
    await page.locator(`tr.alarm[data-alarm-id="${alarmId}"] button.ack`).click();
    await page.fill('#ack-user', 'duty-engineer-1');
    await page.fill('#ack-reason', 'abnormal load with escort seen on the deck camera; no distress visible');
    await page.click('#ack-submit');
    await page.locator('#ack-dialog-result').filter({ hasText: 'Acknowledged' }).waitFor({ timeout: 20_000 });
    await page.click('#ack-cancel');

    // The terminal says it too, as `run` does: one readable warning line per transition and refusal.
    expect(demo.output()).toMatch(/WARNING alarm RAISED advisory structural: group \S+ von_mises_MPa [\d.]+ MPa \(limit [\d.]+ MPa\)/);
    await demo.waitFor(new RegExp(`WARNING alarm ACKNOWLEDGED .*by duty-engineer-1 .*id ${alarmId!.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}`), 10_000);
    expect(demo.output()).toMatch(/WARNING acknowledgement of \S+ by visitor-7 REFUSED/);

    const log = (await readFile(join(dir, 'var', 'alarms.ndjson'), 'utf8')).trim().split('\n').map((l) => JSON.parse(l));
    const acked = log.find((l) => l.type === 'transition' && l.message.transition === 'acknowledged' && l.message.alarm_id === alarmId);
    expect(acked?.message.acknowledged_by).toBe('duty-engineer-1');
    expect(acked?.message.acknowledged_reason).toBe('abnormal load with escort seen on the deck camera; no distress visible');
    const refused = log.find((l) => l.type === 'refusal' && JSON.stringify(l).includes('visitor-7'));
    expect(JSON.stringify(refused)).toContain('user_not_allowed');
    // The page follows: the row says who acknowledged it, or it is gone (acknowledged after it cleared).
    await page.waitForFunction((id) => {
      const r = document.querySelector(`tr.alarm[data-alarm-id="${id}"]`);
      return r === null || (r.textContent ?? '').includes('duty-engineer-1');
    }, alarmId, { timeout: 10_000 });
    await page.screenshot({ path: join(ARTIFACTS, 'live-page.png'), fullPage: true });
  }, 120_000);

  it('shows each fatigue detail: damage, rate, remaining life with its assumptions, the histogram against the S-N curve', async () => {
    const section = page.locator('#fatigue');
    await section.waitFor({ state: 'visible', timeout: 20_000 });
    await section.scrollIntoViewIfNeeded();
    expect(await page.locator('#fatigue article.fatigue-detail').evaluateAll((as) => as.map((a) => (a as HTMLElement).dataset.detail)))
      .toEqual(['flange-south-cover-plate-end', 'flange-north-butt-weld', 'web-north-stiffener-toe']);
    const card = await page.locator('#fatigue article[data-detail="flange-south-cover-plate-end"]').innerText();
    expect(card).toMatch(/damage so far \(Miner\)\s+\S+/);
    expect(card).toMatch(/remaining life\s+(not known yet|no damage over the rate window|[\d.e+]+ years at the recent rate)/);
    expect(card).toMatch(/not monitored\s+/);
    expect(await page.locator('#fatigue-assumptions li').allInnerTexts()).toContain('damage before monitoring began is not known and is not included');
    expect((await page.locator('#fatigue article[data-detail="flange-south-cover-plate-end"] polyline.sn-curve').getAttribute('points'))!.split(' ').length).toBeGreaterThan(5);
    await page.screenshot({ path: join(ARTIFACTS, 'live-page-fatigue.png'), clip: { ...(await section.boundingBox())! } });
  }, 60_000);

  it('fits a phone-sized screen', async () => {
    const phone = await browser.newPage({ viewport: { width: 390, height: 844 } });
    await phone.goto(url);
    await phone.locator('article.group[data-group="slab-mid1"]').scrollIntoViewIfNeeded();
    await phone.locator('article.group[data-group="slab-mid1"] .when').filter({ hasText: 'result of' }).waitFor({ timeout: 10_000 });
    await phone.evaluate(() => window.scrollTo(0, 0));
    const overflow = await phone.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
    expect(overflow).toBeLessThanOrEqual(0);
    await phone.screenshot({ path: join(ARTIFACTS, 'live-page-phone.png') });
    await phone.locator('#groups').scrollIntoViewIfNeeded();
    await phone.screenshot({ path: join(ARTIFACTS, 'live-page-phone-groups.png') });
    await phone.close();
  });

  it('stops on an interrupt with every message acknowledged', async () => {
    await browser.close();
    await demo.interrupt();
    const out = await demo.waitFor(/stopped: (\d+) scans and (\d+) results processed; (\d+) messages left unacknowledged/, 5_000);
    expect(Number(out[1])).toBeGreaterThan(100);
    expect(Number(out[3])).toBe(0);
  }, 60_000);
});
