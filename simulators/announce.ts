import type { FaultLogEntry } from './faults.js';
import type { ScanSink } from './outputs.js';
import type { SimScan } from './run.js';
import type { Scenario } from './scenario.js';

/** Something the simulator makes happen, for the person watching: at true time at_ms (epoch ms). */
export interface Episode { at_ms: number; text: string }

const plus = (scn: Scenario, ms: number) => `+${Math.round((ms - scn.start_ms) / 1000)} s`;

/** Heavy vehicles entering, faults starting and ending, in time order. Pure. */
export function episodesOf(scn: Scenario, faultLog: readonly FaultLogEntry[]): Episode[] {
  const out: Episode[] = scn.heavy_vehicles.map((h) => ({
    at_ms: scn.start_ms + h.at_s * 1000, text: `heavy vehicle (${h.gross_kN} kN) enters the deck: expect a von Mises alarm on the steel groups`,
  }));
  for (const f of faultLog) {
    const where = f.channel === null ? f.logger : `${f.logger}/${f.channel}`;
    const expect = f.expected_health.length > 0 ? `: expect ${f.expected_health.join(', ')}` : '';
    out.push({ at_ms: f.start_ms, text: `fault ${f.kind} starts on ${where} (${f.note})${expect}` });
    if (f.end_ms !== null && f.kind !== 'spikes') out.push({ at_ms: f.end_ms, text: `fault ${f.kind} on ${where} ends` });
  }
  return out.sort((a, b) => a.at_ms - b.at_ms);
}

/** The line printed when a run starts: what is published where, for how long, and what happens when. */
export function describeRun(scn: Scenario, faultLog: readonly FaultLogEntry[], target: string, speed: number, structureId: string): string {
  const pace = speed === 0 ? 'as fast as possible' : speed === 1 ? 'in real time' : `at ${speed}x real time`;
  const heavy = scn.heavy_vehicles.length === 0 ? 'no heavy vehicle' : `heavy vehicle at ${scn.heavy_vehicles.map((h) => `+${h.at_s} s`).join(', ')}`;
  const faults = faultLog.length === 0 ? 'no faults' : `faults: ${faultLog.map((f) => `${f.kind} ${plus(scn, f.start_ms)}${f.end_ms === null ? '' : `..${plus(scn, f.end_ms)}`}`).join(', ')}`;
  return `simulator: publishing the invented ${structureId} loggers to ${target} ${pace} from ${new Date(scn.start_ms).toISOString()} for ${scn.duration_s} s `
    + `(a scenario day every ${scn.day_s} s, ${scn.traffic.vehicles_per_min} vehicles/min); ${heavy}; ${faults}`;
}

/** A sink that prints each episode when the run reaches it (the scans themselves go to the other sinks). */
export function episodeSink(scn: Scenario, episodes: readonly Episode[], print: (line: string) => void): ScanSink {
  let next = 0;
  return {
    async send(scan: SimScan) {
      while (next < episodes.length && episodes[next].at_ms <= scan.trueMs) {
        print(`simulator ${plus(scn, episodes[next].at_ms)}: ${episodes[next].text}`);
        next++;
      }
    },
    async close() {},
  };
}
