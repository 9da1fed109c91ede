import { resolve } from 'node:path';
import { ConfigError } from '../config/compile.js';
import type { LoadedRuntime } from '../config/load-runtime.js';

/**
 * The live job raises alarms or says loudly that it does not. A structure file without an `alarms`
 * section would raise nothing, health alarms included (a silent logger, a dead channel), and say
 * nothing: refused (exit 3). `alarms: { disabled: true }` is the same on purpose: it starts, and
 * the log, the presence message and `status` say so.
 */
export const ALARMS_MISSING = 'missing: without an alarms section the live job would raise no alarm at all, not even for a silent logger or a dead channel; '
  + 'configure alarms (levels, rules, health), or write "alarms: { disabled: true }" to run without alarms on purpose';

/** What the log and `status` say while alarms are disabled. */
export const ALARMS_DISABLED = 'alarms are DISABLED (structure file: alarms: { disabled: true }): nothing raises an alarm, not even a silent logger; '
  + 'watch the results by other means';

/** Throws a ConfigError naming `alarms` when the structure file has no `alarms` section and does not disable it. */
export function requireAlarmsDecision(loaded: LoadedRuntime): void {
  const { structure, runtime, baseDir } = loaded;
  if (structure.alarms === null && !structure.alarmsDisabled) {
    throw new ConfigError(resolve(baseDir, runtime.structure), [{ path: 'alarms', reason: ALARMS_MISSING }]);
  }
}
