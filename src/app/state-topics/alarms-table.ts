import { readable } from '../../alarms/routing/format.js';
import type { OpenAlarmEntry } from './open-alarms.js';

/** What an alarm is about, in words: group, logger channel, logger or processor part. */
export function subjectWords(subject: Record<string, string | null>): string {
  if (subject.kind === 'group') return `group ${subject.group_id}`;
  if (subject.kind === 'channel') return `${subject.logger_id}/${subject.channel_id}${subject.group_id ? ` (group ${subject.group_id})` : ''}`;
  if (subject.kind === 'logger') return `logger ${subject.logger_id}`;
  if (subject.kind === 'component') return `processor ${subject.component}`;
  return JSON.stringify(subject);
}

function valueWords(a: OpenAlarmEntry): string {
  const u = a.units === '' || a.units === '1' ? '' : ` ${a.units}`;
  const value = a.value === null ? 'no value' : `${readable(a.value)}${u}`;
  return a.limit === null ? `${a.quantity} ${value}` : `${a.quantity} ${value} (limit ${readable(a.limit)}${u})`;
}

/** States in words; nothing is told by a colour or a code alone. */
const STATE_WORDS: Readonly<Record<OpenAlarmEntry['state'], string>> = {
  active_unacknowledged: 'ACTIVE, not acknowledged',
  active_acknowledged: 'active, acknowledged',
  cleared_unacknowledged: 'cleared, not acknowledged',
};

/**
 * The open alarms as a plain-text table, in the list's order (most severe first): level, class,
 * state, since, what, value against limit, who acknowledged, id. Columns padded to their widest
 * cell. Pure.
 */
export function alarmsTable(alarms: readonly OpenAlarmEntry[]): string[] {
  const header = ['LEVEL', 'CLASS', 'STATE', 'SINCE (UTC)', 'SUBJECT', 'LOCATION', 'VALUE', 'ACKNOWLEDGED BY', 'ID'];
  const rows = alarms.map((a) => [
    a.level.toUpperCase(), a.alarm_class, STATE_WORDS[a.state], a.since.replace('T', ' ').replace(/\.\d+Z$/, ''), subjectWords(a.subject),
    a.location, valueWords(a), a.acknowledged_by ?? '-', a.alarm_id,
  ]);
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
  const line = (cells: string[]) => cells.map((c, i) => (i === cells.length - 1 ? c : c.padEnd(widths[i]))).join('  ');
  return [line(header), ...rows.map(line)];
}
