import mqtt, { type MqttClient } from 'mqtt';
import { serverList } from '../../src/adapters/mqtt/options.js';
import type { CompiledStructure } from '../../src/config/compile.js';
import { readingsFromStress } from '../../src/mechanics/forward-model.js';

export const STRAIN_LOGGER = 'lg-span1';
export const THERMAL_LOGGER = 'lg-thermal';

/**
 * The deck's span-1 logger and its thermocouple scanner: scans at a steady rate, each with a
 * unique `seq` (never reused across scenarios), QoS 1 on a persistent session so a broker restart
 * loses nothing on this side. `published` holds the seqs the broker acknowledged, with their ts.
 */
export class ScanPublisher {
  readonly published = new Map<number, number>();
  readonly thermalPublished = new Map<number, number>();
  private seq = 0;
  private thermalSeq = 0;
  private timer: NodeJS.Timeout | null = null;
  private thermalTimer: NodeJS.Timeout | null = null;
  private pending = 0;
  private readonly values: Record<string, number>[] = [];

  private constructor(private readonly client: MqttClient, private readonly structureId: string) {}

  static async connect(url: string, structure: CompiledStructure, clientId = 'faults-loggers', servers?: string[]): Promise<ScanPublisher> {
    const client = await mqtt.connectAsync(url, { ...serverList(servers), connectTimeout: 10_000, clientId, clean: false, protocolVersion: 4, reconnectPeriod: 200, keepalive: 5 });
    const p = new ScanPublisher(client, structure.structureId);
    // A handful of stress states through the mechanics run backwards: readings a real deck could give.
    const groups = structure.groupsByLogger.get(STRAIN_LOGGER) ?? [];
    for (let k = 0; k < 16; k++) {
      const values: Record<string, number> = {};
      for (const g of groups) {
        const stress = g.model.n === 1 ? [20 + k] : [20 + k, 5, 3];
        const raw = readingsFromStress(g.model, stress, 14, Number.NaN, new Float64Array(g.model.m));
        g.model.elements.forEach((_e, i) => { values[g.elementChannels[i]] = raw[i]; });
      }
      p.values.push(values);
    }
    return p;
  }

  /** Strain scans at `perSecond` from now on (thermal scans run from `startThermal` to `close`). */
  startScans(perSecond: number): void {
    this.stopScans();
    this.timer = setInterval(() => this.publishScan(), 1000 / perSecond);
  }

  stopScans(): void {
    if (this.timer !== null) clearInterval(this.timer);
    this.timer = null;
  }

  startThermal(): void {
    const send = () => {
      const seq = ++this.thermalSeq;
      const ts = Date.now();
      this.track(this.client.publishAsync(`strainward/${this.structureId}/${THERMAL_LOGGER}/scan`,
        JSON.stringify({ ts, seq, values: { t1: 14, t2: 14, t3: 14, t4: 14 } }), { qos: 1 }), () => this.thermalPublished.set(seq, ts));
    };
    send();
    this.thermalTimer = setInterval(send, 1000);
  }

  /** Refused messages in a row (not JSON) on the strain logger's topic. */
  async burstRefused(count: number): Promise<void> {
    for (let i = 0; i < count; i++) {
      this.track(this.client.publishAsync(`strainward/${this.structureId}/${STRAIN_LOGGER}/scan`, `{"ts": not json ${i}`, { qos: 1 }), () => {});
    }
    await this.drained();
  }

  /** The next seq to be used (the start of a scenario's range). */
  get nextSeq(): number { return this.seq + 1; }

  /**
   * Waits until the broker acknowledged every publish, at most `timeoutMs`; returns how many are
   * still unconfirmed then. They are not counted as published (only broker-acknowledged scans are),
   * so an unconfirmed publish can never hide a loss; the harness prints the figure.
   */
  async drained(timeoutMs = 30_000): Promise<number> {
    const deadline = Date.now() + timeoutMs;
    while (this.pending > 0 && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
    return this.pending;
  }

  async close(): Promise<void> {
    this.stopScans();
    if (this.thermalTimer !== null) clearInterval(this.thermalTimer);
    await this.drained().catch(() => undefined);
    await this.client.endAsync();
  }

  private publishScan(): void {
    const seq = ++this.seq;
    const ts = Date.now();
    const values = this.values[seq % this.values.length];
    this.track(this.client.publishAsync(`strainward/${this.structureId}/${STRAIN_LOGGER}/scan`, JSON.stringify({ ts, seq, values }), { qos: 1 }),
      () => this.published.set(seq, ts));
  }

  private track(p: Promise<unknown>, onAck: () => void): void {
    this.pending++;
    p.then(onAck, () => undefined).finally(() => { this.pending--; });
  }
}
