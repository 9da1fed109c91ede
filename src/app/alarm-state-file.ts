import { rename, stat } from 'node:fs/promises';
import { createAlarmEngine, loadSnapshot, type AlarmsConfig } from '../alarms/index.js';
import type { AlarmInput, AlarmLookups } from '../alarms/types.js';
import { newEngineState } from '../alarms/engine/state.js';
import { serialiseState } from '../alarms/engine/state-migration.js';

/** Component name of the operations alarm raised when the alarm state had to be started afresh. */
export const ALARM_STATE_COMPONENT = 'alarm-state';

/** What the alarm wiring starts from. */
export interface OpenedAlarmState {
  /** The engine state to restore (a fresh one numbered past earlier alarms after a reset). */
  snapshotJson?: string;
  /** Inputs the engine takes before any other: the reset's operations alarm. */
  startInputs: AlarmInput[];
}

export interface AlarmStateDeps {
  /** Wall clock, epoch ms: the kept file's name and the id floor. */
  now: () => number;
  log: (event: string, detail: Record<string, unknown>) => void;
}

/** `20261202T073012Z`: a file-name-safe UTC time. */
const stamp = (ms: number): string => new Date(ms).toISOString().replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z');

async function nonEmpty(path: string): Promise<boolean> {
  try {
    return (await stat(path)).size > 0;
  } catch {
    return false;
  }
}

/**
 * Reads the alarm state file. A snapshot that cannot be read (damaged, from a newer version) never
 * stops the start, since a processor that does not start raises no alarm at all: the file is kept
 * aside as `<file>.unreadable-<time>`, the state starts afresh, the log says what to do, and an
 * operations alarm (component_fault of `alarm-state`) says the state was reset; it is raised and
 * cleared at once, so it stays visible until someone acknowledges it.
 *
 * Alarm ids after a fresh start must not repeat ids already in the alarm log and the database:
 * a fresh state whose alarm log already has lines (a reset, or a state file removed by hand)
 * numbers its alarms above the wall-clock seconds of this start. Seeded from the clock rather
 * than from the log's last id: it needs no read of a log that may be long or damaged too, and it
 * holds when the log was lost; it fails only if one rule and subject had more new alarms than
 * seconds between two fresh starts, or the clock went back past the previous fresh start.
 */
export async function openAlarmState(
  cfg: AlarmsConfig, lookups: AlarmLookups, snapshotPath: string, logPath: string, deps: AlarmStateDeps,
): Promise<OpenedAlarmState> {
  const snapshotJson = (await loadSnapshot(snapshotPath)) ?? undefined;
  const nowMs = deps.now();
  const idFloor = Math.floor(nowMs / 1000);
  if (snapshotJson === undefined) {
    if (!(await nonEmpty(logPath))) return { startInputs: [] };
    deps.log('alarm_state_missing', {
      file: snapshotPath, alarmLog: logPath, idFloor,
      message: `No alarm state file, but the alarm log has alarms: starting with fresh state, new alarms numbered from ${idFloor + 1} so their ids differ from earlier ones. Alarms visible before are not restored: check the alarm log.`,
    });
    return { snapshotJson: serialiseState(newEngineState(idFloor)), startInputs: [] };
  }
  try {
    createAlarmEngine(cfg, lookups, snapshotJson);
    return { snapshotJson, startInputs: [] };
  } catch (err) {
    const reason = err instanceof Error ? err.message : String(err);
    const keptAs = `${snapshotPath}.unreadable-${stamp(nowMs)}`;
    try {
      await rename(snapshotPath, keptAs);
    } catch (e) {
      // Not kept aside, the next save would overwrite it: better not to start than to lose it.
      throw new Error(`alarm state file ${snapshotPath} cannot be restored (${reason}) nor moved aside to ${keptAs}: ${(e as Error).message}`);
    }
    const failure = `the alarm state file could not be read (${reason}); started with fresh state, the old file kept as ${keptAs}`;
    deps.log('alarm_state_reset', {
      file: snapshotPath, keptAs, reason, alarmLog: logPath, idFloor,
      message: `The alarm state file could not be read and is kept as ${keptAs}; the processor starts with fresh alarm state. ` +
        `Alarms active before this start are not restored: look in the alarm log ${logPath} for alarms raised and not closed and check each on site, ` +
        `then acknowledge the "${ALARM_STATE_COMPONENT}" operations alarm. Keep ${keptAs} for the developers.`,
    });
    return {
      snapshotJson: serialiseState(newEngineState(idFloor)),
      startInputs: [
        { type: 'component', component: ALARM_STATE_COMPONENT, failure, atMs: nowMs },
        { type: 'component', component: ALARM_STATE_COMPONENT, failure: null, atMs: nowMs },
      ],
    };
  }
}
