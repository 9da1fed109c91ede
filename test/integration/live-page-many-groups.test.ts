/**
 * The live page with hundreds of groups, in headless Chromium (Debian chromium, playwright-core):
 * an invented test structure of 12 zones x 20 single-gauge beams (240 groups) on 12 loggers, a live
 * job on a real Mosquitto started here, one scan per logger. Every group is on the page in its zone;
 * searching narrows to one zone or one group and says how many are shown; "only groups with an
 * alarm or a flag" leaves the beams above their limit; a phone-sized screen has no sideways scroll.
 */
import { mkdir, mkdtemp, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import mqtt from 'mqtt';
import { chromium, type Browser, type Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startLive, type LiveProcessor } from '../../src/app/live.js';
import { loadRuntimeFile } from '../../src/config/load-runtime.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';
import { startMosquitto, type MosquittoServer } from '../support/servers.js';
import { STEEL } from '../support/structures.js';

const ZONES = 12;
const BEAMS_PER_ZONE = 20;
const ARTIFACTS = resolve('test-artifacts');
const pad = (n: number) => String(n).padStart(2, '0');
const zoneId = (z: number) => `bay-${pad(z)}`;
const loggerId = (z: number) => `lg-bay-${pad(z)}`;
const beamId = (z: number, b: number) => `beam-${pad(z)}-${pad(b)}`;
/** Beams loaded above the 150 MPa advisory limit: the last beam of zones 3 and 9. */
const LOADED = new Set([beamId(3, BEAMS_PER_ZONE), beamId(9, BEAMS_PER_ZONE)]);

function structureDoc() {
  const loggers = [], temperature_sensors = [], gauges = [], groups = [];
  for (let z = 1; z <= ZONES; z++) {
    loggers.push({ id: loggerId(z), expected_interval_s: 3600 });
    temperature_sensors.push({ id: `tc-${pad(z)}`, kind: 'thermocouple', channel: { logger: loggerId(z), channel: 't1' } });
    for (let b = 1; b <= BEAMS_PER_ZONE; b++) {
      gauges.push({ id: `sg-${pad(z)}-${pad(b)}`, kind: 'bonded_foil', channel: { logger: loggerId(z), channel: `ch${pad(b)}` }, signal: { unit: 'microstrain' }, zero_reading: 0, zero_temperature_degC: 20 });
      groups.push({
        id: beamId(z, b), kind: 'single', material: 'steel', zone: zoneId(z), location: `cross girder ${b} of bay ${z}, bottom flange`,
        elements: [{ gauge: `sg-${pad(z)}-${pad(b)}` }], temperature_sensors: [`tc-${pad(z)}`], temperature: { mode: 'last', max_age_s: 3600 },
      });
    }
  }
  return {
    schema_version: 1,
    structure: { id: 'many-bays', name: 'Invented twelve-bay test viaduct', location: 'test bench' },
    materials: [STEEL], loggers, temperature_sensors, gauges, groups,
    alarms: {
      levels: ['advisory', 'alert', 'action'],
      rules: [{ id: 'beam-von-mises', kind: 'limit', quantity: 'von_mises_MPa', scope: { kind: 'structure' }, direction: 'above', thresholds: [{ level: 'advisory', value: 150 }], clear_margin: 20, action: 'Inspect the beam.' }],
      health: { level: 'advisory', no_data: { missing_after_intervals: 5 }, spike: { enabled: false }, flatline: { enabled: false } },
      acknowledgement: { allowed_users: { structural: ['duty-engineer-1'], health: ['instr-tech-1'] } },
    },
  };
}

let broker: MosquittoServer;
let live: LiveProcessor;
let browser: Browser;
let page: Page;

beforeAll(async () => {
  broker = await startMosquitto();
  const dir = await mkdtemp(join(tmpdir(), 'sw-many-groups-'));
  await writeFile(join(dir, 'structure.json'), JSON.stringify(structureDoc()));
  await writeFile(join(dir, 'runtime.json'), JSON.stringify({
    schema_version: 1, structure: 'structure.json', mqtt: { url: broker.url, client_id: 'strainward-test-many-groups' },
    line_protocol: { dir: 'lp' }, dead_letters: { file: 'deadletters.ndjson', mqtt_topic: '' },
    alarms: { state_file: 'alarm-state.json', log_file: 'alarms.ndjson' },
    live_page: { host: '127.0.0.1', port: 0 }, tick_ms: 100,
  }));
  const loaded = await loadRuntimeFile(join(dir, 'runtime.json'));
  live = await startLive(loaded, { now: Date.now, log: () => {} });
  const pub = await mqtt.connectAsync(broker.url, { clientId: 'test-many-groups-loggers', protocolVersion: 5, reconnectPeriod: 0 });
  for (let z = 1; z <= ZONES; z++) {
    const values: Record<string, number> = { t1: 20 };
    for (const g of loaded.structure.groupsByLogger.get(loggerId(z))!) {
      const [raw] = readingsFromStress(g.model, [LOADED.has(g.config.id) ? 180 : 40], 20, Number.NaN, new Float64Array(1));
      values[g.elementChannels[0]] = raw;
    }
    await pub.publishAsync(`strainward/many-bays/${loggerId(z)}/scan`, JSON.stringify({ ts: Date.now() - 1000, seq: 1, values }), { qos: 1 });
  }
  await pub.endAsync();
  browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking'] });
  page = await browser.newPage({ viewport: { width: 1280, height: 900 } });
  await page.goto(live.pageUrl!);
  await mkdir(ARTIFACTS, { recursive: true });
}, 60_000);

afterAll(async () => {
  await browser?.close();
  await live?.stop();
  await broker?.stop();
});

const shownCards = () => page.locator('article.group:not([hidden])').count();
const shownZones = () => page.locator('details.zone:not([hidden])').count();

describe(`live page with ${ZONES * BEAMS_PER_ZONE} groups, in a browser`, () => {
  it('lists every group in its zone and counts them', async () => {
    await page.waitForFunction((n) => document.querySelectorAll('article.group').length === n, ZONES * BEAMS_PER_ZONE, { timeout: 20_000 });
    expect(await page.locator('#group-count').innerText()).toBe(`(${ZONES * BEAMS_PER_ZONE})`);
    expect(await page.locator('details.zone').count()).toBe(ZONES);
    expect(await page.locator(`details.zone[data-zone="${zoneId(7)}"] article.group`).count()).toBe(BEAMS_PER_ZONE);
    // Both loaded beams raise their alarm; the zone notes say which zones hold them.
    await page.locator('tr.alarm[data-rule="beam-von-mises"]').nth(1).waitFor({ timeout: 20_000 });
    expect(await page.locator(`details.zone[data-zone="${zoneId(3)}"] .zone-note`).innerText()).toContain(`${BEAMS_PER_ZONE} groups, 1 with open alarms`);
    expect(await page.locator(`details.zone[data-zone="${zoneId(4)}"] .zone-note`).innerText()).toContain(`${BEAMS_PER_ZONE} groups, 0 with open alarms`);
  }, 60_000);

  it('search narrows to a zone or a group and says how many are shown', async () => {
    await page.fill('#filter', zoneId(7));
    await page.waitForFunction(() => document.querySelectorAll('details.zone:not([hidden])').length === 1, null, { timeout: 5_000 });
    expect(await shownCards()).toBe(BEAMS_PER_ZONE);
    expect(await page.locator(`details.zone[data-zone="${zoneId(7)}"]`).isVisible()).toBe(true);

    await page.fill('#filter', beamId(11, 5));
    await page.waitForFunction(() => document.querySelectorAll('article.group:not([hidden])').length === 1, null, { timeout: 5_000 });
    expect(await page.locator(`details.zone[data-zone="${zoneId(11)}"] .zone-note`).innerText()).toContain('1 shown');
    // The shown card is painted with its value (cards off the screen are painted when they come into view).
    await page.locator(`article.group[data-group="${beamId(11, 5)}"] .when`).filter({ hasText: 'result of' }).waitFor({ timeout: 10_000 });

    await page.fill('#filter', 'no such beam');
    await page.waitForFunction(() => document.querySelectorAll('article.group:not([hidden])').length === 0, null, { timeout: 5_000 });
    expect(await shownZones()).toBe(0);
    await page.fill('#filter', '');
    await page.waitForFunction((n) => document.querySelectorAll('article.group:not([hidden])').length === n, ZONES * BEAMS_PER_ZONE, { timeout: 5_000 });
  }, 30_000);

  it('"only groups with an alarm or a flag" leaves the two loaded beams', async () => {
    await page.check('#only-attention');
    await page.waitForFunction(() => document.querySelectorAll('article.group:not([hidden])').length === 2, null, { timeout: 5_000 });
    const ids = await page.locator('article.group:not([hidden])').evaluateAll((els) => els.map((e) => (e as HTMLElement).dataset.group));
    expect(new Set(ids)).toEqual(LOADED);
    expect(await shownZones()).toBe(2);
    // Not by colour alone: the card says it in words.
    expect(await page.locator(`article.group[data-group="${beamId(3, BEAMS_PER_ZONE)}"] .alarm-note`).innerText()).toMatch(/1 open alarm: advisory beam-von-mises/);
    await page.screenshot({ path: join(ARTIFACTS, 'live-page-many-groups.png') });
    await page.uncheck('#only-attention');
  }, 30_000);

  it('fits a phone-sized screen with hundreds of groups', async () => {
    const phone = await browser.newPage({ viewport: { width: 390, height: 844 } });
    await phone.goto(live.pageUrl!);
    await phone.waitForFunction((n) => document.querySelectorAll('article.group').length === n, ZONES * BEAMS_PER_ZONE, { timeout: 20_000 });
    const overflow = await phone.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(overflow).toBeLessThanOrEqual(0);
    await phone.close();
  }, 30_000);
});
