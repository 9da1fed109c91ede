import type { HealthCheck } from '../schema.js';

/**
 * Alarm keys (`<check or rule>|<subject>`) made once per check and subject, not per reading: the
 * strings built for every channel of every scan were a large part of the engine's garbage. Keys
 * depend only on names from the configuration, so the caches are shared and bounded by it.
 */
const channelSubjects = new Map<string, Map<string, string>>();
const loggerSubjects = new Map<string, string>();
const groupSubjects = new Map<string, string>();
const keys = new Map<string, Map<string, string>>();

/** `c:<logger>/<channel>`: a channel's subject part of a key. */
export function channelSubjectKey(loggerId: string, channelId: string): string {
  let byChannel = channelSubjects.get(loggerId);
  if (byChannel === undefined) channelSubjects.set(loggerId, (byChannel = new Map()));
  let k = byChannel.get(channelId);
  if (k === undefined) byChannel.set(channelId, (k = `c:${loggerId}/${channelId}`));
  return k;
}

const channelPaths = new Map<string, Map<string, string>>();

/** `<logger>/<channel>`: a channel's key in the engine's last-reading times. */
export function channelPath(loggerId: string, channelId: string): string {
  let byChannel = channelPaths.get(loggerId);
  if (byChannel === undefined) channelPaths.set(loggerId, (byChannel = new Map()));
  let k = byChannel.get(channelId);
  if (k === undefined) byChannel.set(channelId, (k = `${loggerId}/${channelId}`));
  return k;
}

/** `l:<logger>`. */
export function loggerSubjectKey(loggerId: string): string {
  let k = loggerSubjects.get(loggerId);
  if (k === undefined) loggerSubjects.set(loggerId, (k = `l:${loggerId}`));
  return k;
}

/** `g:<group>`. */
export function groupSubjectKey(groupId: string): string {
  let k = groupSubjects.get(groupId);
  if (k === undefined) groupSubjects.set(groupId, (k = `g:${groupId}`));
  return k;
}

/** `<check or rule id>|<subject key>`: the key of one detector's state and alarm. */
export function alarmKey(checkOrRule: HealthCheck | string, subjectKey: string): string {
  let bySubject = keys.get(checkOrRule);
  if (bySubject === undefined) keys.set(checkOrRule, (bySubject = new Map()));
  let k = bySubject.get(subjectKey);
  if (k === undefined) bySubject.set(subjectKey, (k = `${checkOrRule}|${subjectKey}`));
  return k;
}
