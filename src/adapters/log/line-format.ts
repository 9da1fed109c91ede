/**
 * One pino record (parsed JSON) as one readable terminal line: time, level, the event in words
 * with the setting to change when there is one, then the remaining details as `key=value`. Pure.
 */

const LEVEL_NAMES: Readonly<Record<number, string>> = { 10: 'TRACE', 20: 'DEBUG', 30: 'INFO', 40: 'WARNING', 50: 'ERROR', 60: 'FATAL' };

/** Fields of the record that are never repeated as `key=value`. */
const FRAME_FIELDS = new Set(['level', 'time', 'pid', 'hostname', 'name', 'event', 'msg', 'v']);

type Detail = Record<string, unknown>;

const num = (v: unknown, digits = 3): string => (typeof v === 'number' && Number.isFinite(v) ? String(Number(v.toFixed(digits))) : String(v));
const pct = (v: unknown): string => (typeof v === 'number' ? `${(100 * v).toFixed(1)} %` : 'unknown');
const mib = (v: unknown): string => (typeof v === 'number' ? `${(v / 1024 ** 2).toFixed(1)} MiB` : 'unknown');
const valueAgainstLimit = (d: Detail): string => {
  const units = typeof d.units === 'string' && d.units !== '' ? ` ${d.units}` : '';
  const value = d.value === null || d.value === undefined ? 'no value' : `${num(d.value)}${units}`;
  return d.limit === null || d.limit === undefined ? value : `${value} (limit ${num(d.limit)}${units})`;
};

/** The words for the events a person on duty must read; each returns the text and the fields it used. */
const TEMPLATES: Readonly<Record<string, (d: Detail) => [string, string[]]>> = {
  alarm_raised: (d) => [`alarm RAISED ${d.alarmLevel} ${d.class}: ${d.subject} ${d.quantity} ${valueAgainstLimit(d)}; id ${d.alarmId}`,
    ['alarmLevel', 'class', 'subject', 'quantity', 'value', 'limit', 'units', 'alarmId']],
  alarm_level_changed: (d) => [`alarm LEVEL ${d.previousLevel} -> ${d.alarmLevel} ${d.class}: ${d.subject} ${d.quantity} ${valueAgainstLimit(d)}; id ${d.alarmId}`,
    ['previousLevel', 'alarmLevel', 'class', 'subject', 'quantity', 'value', 'limit', 'units', 'alarmId']],
  alarm_cleared: (d) => [`alarm CLEARED ${d.alarmLevel} ${d.class}: ${d.subject} ${d.quantity} ${valueAgainstLimit(d)}; id ${d.alarmId}`,
    ['alarmLevel', 'class', 'subject', 'quantity', 'value', 'limit', 'units', 'alarmId']],
  alarm_acknowledged: (d) => [`alarm ACKNOWLEDGED ${d.alarmLevel} ${d.class}: ${d.subject} by ${d.user} ("${d.reason}"); id ${d.alarmId}`,
    ['alarmLevel', 'class', 'subject', 'user', 'reason', 'alarmId', 'quantity', 'value', 'limit', 'units']],
  ack_refused: (d) => [`acknowledgement of ${d.alarmId} by ${d.user} REFUSED: ${d.reason}`, ['alarmId', 'user', 'reason']],
  // The reason says where the spool stands (component-watch.ts).
  database_unreachable: (d) => [`database LOST: ${d.reason}`, ['reason', 'component', 'spoolFillRatio', 'spoolBytes']],
  database_reachable: (d) => [`database BACK: results are written again, the spool drains (spool ${typeof d.spoolBytes === 'number' ? `${mib(d.spoolBytes)}, ` : ''}${pct(d.spoolFillRatio)} full)`, ['component', 'spoolFillRatio', 'spoolBytes']],
  broker_lost: (d) => [`broker LOST: ${d.reason}`, ['reason', 'component']],
  broker_back: () => ['broker BACK: connected again', ['component']],
  webhook_failing: (d) => [`webhook FAILING (${d.component}): ${d.reason}`, ['reason', 'component']],
  webhook_delivering: (d) => [`webhook delivering again (${d.component})`, ['component']],
  dead_letters: (d) => [d.messages === 1
    ? `message REFUSED from ${d.logger}: ${d.first_reason} (kept in the dead-letter file)`
    : `${d.messages} messages REFUSED from ${d.logger} in ${d.over_s} s; first: ${d.first_reason} (kept in the dead-letter file)`,
  ['messages', 'logger', 'first_reason', 'over_s']],
  spool_high_water: (d) => [`spool ${pct(d.fillRatio)} full of ${mib(d.limitBytes)} (disk free ${mib(d.diskFreeBytes)}): the database is not taking results; raise database.spool.limit_bytes or bring the database back`,
    ['fillRatio', 'limitBytes', 'diskFreeBytes']],
  write_failed: (d) => [d.failures === 1 ? `result write FAILED: ${d.reason}` : `${d.failures} result writes FAILED in ${d.over_s} s; first: ${d.first_reason}`,
    ['failures', 'reason', 'over_s', 'first_reason']],
  mqtt_window_exceeded: (d) => [`broker ignores the intake window: ${d.message}`, ['message']],
  mqtt_offline: () => ['broker connection lost; reconnecting (mqtt.reconnect_initial_ms, mqtt.reconnect_max_ms)', []],
  mqtt_connected: (d) => [`broker connected (MQTT ${d.protocolVersion === 5 ? '5' : '3.1.1'}${d.sessionPresent === true ? ', session kept' : ''})`, ['protocolVersion', 'sessionPresent']],
  started: (d) => [`started: structure ${d.structure}${d.livePage ? `, live page ${d.livePage}` : ''}${d.metrics ? `, metrics ${d.metrics}` : ''}${d.alarmsDisabled === true ? ', ALARMS DISABLED' : ''}.${typeof d.notice === 'string' ? ` ${d.notice}` : ''}`,
    ['structure', 'livePage', 'metrics', 'alarmsDisabled', 'notice']],
  alarms_disabled: (d) => [String(d.reason), ['reason']],
  synthetic_data: (d) => [`SYNTHETIC data from logger ${d.logger}: ${d.reason}`, ['logger', 'reason']],
};

/** `key=value` with strings quoted only when they hold spaces; objects as compact JSON. */
function pair(key: string, value: unknown): string {
  if (typeof value === 'string') return `${key}=${/[\s="]/.test(value) ? JSON.stringify(value) : value}`;
  if (typeof value === 'number') return `${key}=${num(value, 6)}`;
  return `${key}=${JSON.stringify(value)}`;
}

/** UTC time of day with milliseconds: terminals of one control room then agree. */
function timeOfDay(ms: unknown): string {
  return typeof ms === 'number' ? new Date(ms).toISOString().slice(11, 23) : '--:--:--.---';
}

export function formatLogLine(record: Detail): string {
  const level = LEVEL_NAMES[record.level as number] ?? String(record.level ?? 'INFO');
  const event = typeof record.event === 'string' ? record.event : '';
  const template = TEMPLATES[event];
  const [text, used] = template !== undefined ? template(record)
    : [[event, typeof record.msg === 'string' ? record.msg : ''].filter((s) => s !== '').join(': '), [] as string[]];
  const skip = new Set(used);
  const rest = Object.entries(record).filter(([k, v]) => !FRAME_FIELDS.has(k) && !skip.has(k) && v !== undefined).map(([k, v]) => pair(k, v));
  return [timeOfDay(record.time), level.padEnd(7), text, ...rest].join(' ').replace(/[\r\n]+/g, ' ');
}

/** A line that is not a JSON record (should not happen) is passed on as it is. */
export function formatLogChunk(line: string): string {
  if (line.trim() === '') return '';
  try {
    const parsed: unknown = JSON.parse(line);
    if (parsed !== null && typeof parsed === 'object' && !Array.isArray(parsed)) return formatLogLine(parsed as Detail);
  } catch { /* fall through */ }
  return line;
}
