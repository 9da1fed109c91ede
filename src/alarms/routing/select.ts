import type { AlarmsConfig, RecipientChannel } from '../schema.js';
import type { AlarmTransition } from '../types.js';
import { recipientsOfTiers } from './match.js';

/** One message to send: a transition to one channel of one recipient. */
export interface Delivery {
  recipientId: string;
  recipientKind: 'crew' | 'on_call' | 'control_room';
  channel: RecipientChannel;
  /** MQTT topic with placeholders filled ({structure}, {zone}, {level}, {class}); null for others. */
  topic: string | null;
  transition: AlarmTransition;
}

/** Tiers told of a transition: an escalation tells the new tier; anything else every tier reached. */
function tiersFor(t: AlarmTransition): number[] {
  if (t.kind === 'escalated') return [t.alarm.tier];
  return Array.from({ length: t.alarm.tier + 1 }, (_, i) => i);
}

/** Fill the placeholders of a topic template. */
export function fillTopic(template: string, t: AlarmTransition): string {
  return template
    .replaceAll('{structure}', t.alarm.structureId)
    .replaceAll('{zone}', t.alarm.zone)
    .replaceAll('{level}', t.alarm.level)
    .replaceAll('{class}', t.alarm.alarmClass);
}

/** Route selection: which recipients and channels hear of a transition. Pure. */
export function selectDeliveries(cfg: AlarmsConfig, t: AlarmTransition): Delivery[] {
  const out: Delivery[] = [];
  for (const r of recipientsOfTiers(cfg, t.alarm, tiersFor(t))) {
    for (const channel of r.channels) {
      out.push({
        recipientId: r.id, recipientKind: r.kind, channel,
        topic: channel.kind === 'mqtt' ? fillTopic(channel.topic, t) : null, transition: t,
      });
    }
  }
  return out;
}
