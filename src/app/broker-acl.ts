import { mosquittoAcl } from '../alarms/acl.js';
import type { LoadedRuntime } from '../config/load-runtime.js';
import { compileTopicPattern, formatTopic } from '../ingest/topic.js';
import { presenceTopic } from './presence.js';

/** Logins that only read (dashboards, the `status` command of an operator). */
export interface AclRoles {
  viewers: readonly string[];
}

/**
 * The broker ACL for a runtime file's structure, by its own conventions: the processor logs in as
 * `mqtt.username` (default `strainward`), each logger as its logger id, each crew with an MQTT
 * channel as its recipient id, each person allowed to acknowledge or rezero as their user name. Pure.
 */
export function brokerAclFor(loaded: LoadedRuntime, roles: AclRoles): string {
  const { runtime: rc, structure } = loaded;
  const s = structure.structureId;
  const pattern = compileTopicPattern(rc.mqtt.topic_pattern);
  const loggers = Object.fromEntries(structure.config.loggers.map((l) => [l.id, formatTopic(pattern, s, l.id)]));
  const anyPart = (t: string) => t.replaceAll('{structure}', s).replace(/\{(zone|level|class)\}/g, '+');
  const crews: Record<string, string[]> = {};
  const notify = new Set<string>();
  for (const r of structure.alarms?.recipients ?? []) {
    for (const ch of r.channels) {
      if (ch.kind !== 'mqtt') continue;
      (crews[r.id] ??= []).push(anyPart(ch.topic));
      notify.add(anyPart(ch.topic));
    }
  }
  const allowed = structure.alarms?.acknowledgement.allowed_users;
  const fill = (t: string) => t.replaceAll('{structure}', s).replaceAll('{user}', '%u');
  const presence = presenceTopic(rc.presence.topic, s, '+');
  // The retained current state (group results, open alarms): the processor writes, readers read.
  const st = rc.state_topics;
  const stateFilters = [
    ...(st.groups_topic === '' ? [] : [st.groups_topic.replaceAll('{structure}', s).replaceAll('{group}', '+')]),
    ...(st.alarms_topic === '' ? [] : [st.alarms_topic.replaceAll('{structure}', s)]),
  ];
  return mosquittoAcl({
    processorUser: rc.mqtt.username ?? 'strainward',
    loggers,
    presenceFilter: presence,
    deadLetterTopic: rc.dead_letters.mqtt_topic === '' ? null : rc.dead_letters.mqtt_topic.replaceAll('{structure}', s),
    notifyFilters: [...notify],
    ackPattern: fill(structure.alarms?.acknowledgement.command_topic ?? 'strainward/{structure}/alarms/ack/{user}'),
    verdictPattern: fill(structure.alarms?.acknowledgement.verdict_topic ?? 'strainward/{structure}/alarms/ack-verdict/{user}'),
    crews,
    acknowledgers: [...new Set([...(allowed?.structural ?? []), ...(allowed?.health ?? [])])],
    viewers: roles.viewers,
    ...(structure.config.rezero === undefined ? {} : {
      rezero: {
        requestPattern: fill(structure.config.rezero.command_topic), verdictPattern: fill(structure.config.rezero.verdict_topic),
        users: [...new Set(structure.config.rezero.allowed.map((a) => a.user))],
      },
    }),
    stateFilters,
  });
}
