import { asyncScheduler, interval, type Observable, type SchedulerLike, type Subscription } from 'rxjs';
import type { Publish } from '../adapters/mqtt/connection.js';
import type { Alarm, AlarmTransition, ComponentFault } from '../alarms/types.js';
import type { RuntimeConfig } from '../config/runtime-schema.js';
import type { GroupResult } from '../model/result.js';
import type { FrameOutput } from '../pipeline/process-frames.js';
import { ComponentFaultRegister } from './component-faults.js';
import type { PresenceCounters } from './presence.js';
import { groupState, groupStateTopic } from './state-topics/group-state.js';
import { OpenAlarms, openAlarmsMessage } from './state-topics/open-alarms.js';
import { RetainedPublisher } from './state-topics/retained-publisher.js';

/** What the live job tells an operator beyond its results: presence details and the retained state topics. */
export interface OperatorState {
  /** Takes the results of the processed stream (subscribe before it is connected). */
  attach(processed$: Observable<FrameOutput<unknown>>): void;
  /** The engine's visible alarms at start; publishes the retained list at once. */
  seedAlarms(alarms: readonly Alarm[]): void;
  /** Each persisted alarm batch's transitions; a change republishes the retained list. */
  onTransitions(transitions: readonly AlarmTransition[]): void;
  /** For the presence message. */
  counters(): Pick<PresenceCounters, 'open_alarms' | 'component_faults'>;
  /** Stops the group timer; waits briefly for publishes in flight (the retained state stays on the broker). */
  stop(): Promise<void>;
}

/**
 * Wires the operator's view of the live job: component faults as they are reported, the open
 * alarms, and the retained topics `state_topics` names (each group's latest result every
 * `interval_s`, only for groups with a newer result; the open-alarm list on every change). Time is
 * the injected clock; the timer runs on the injected scheduler.
 */
export function startOperatorState(o: {
  stateTopics: RuntimeConfig['state_topics'];
  structureId: string;
  processor: string;
  /** The structure's alarm levels, least severe first; null without an alarms section (no list published). */
  levels: readonly string[] | null;
  publish: Publish;
  componentFaults$: Observable<ComponentFault>;
  now: () => number;
  scheduler?: SchedulerLike;
  onError: (event: string, detail: Record<string, unknown>) => void;
}): OperatorState {
  const faults = new ComponentFaultRegister();
  const subscriptions: Subscription[] = [o.componentFaults$.subscribe((f) => faults.note(f))];
  const open = new OpenAlarms();
  const publisher = new RetainedPublisher(o.publish, (topic, err) => o.onError('state_publish_failed', { topic, message: err instanceof Error ? err.message : String(err) }));
  const who = { structure: o.structureId, processor: o.processor };
  const alarmsTopic = o.stateTopics.alarms_topic === '' || o.levels === null ? null : o.stateTopics.alarms_topic.replaceAll('{structure}', o.structureId);
  const publishAlarms = (): void => {
    if (alarmsTopic !== null) publisher.send(alarmsTopic, () => openAlarmsMessage(open.list(), who, o.now(), o.stateTopics.max_message_bytes));
  };

  const latest = new Map<string, GroupResult>();
  const fresh = new Set<string>(); // groups with a result newer than the one last published
  const groupsPattern = o.stateTopics.groups_topic === '' ? null : o.stateTopics.groups_topic;
  if (groupsPattern !== null) {
    subscriptions.push(interval(o.stateTopics.interval_s * 1000, o.scheduler ?? asyncScheduler).subscribe(() => {
      for (const g of fresh) {
        const r = latest.get(g)!;
        publisher.send(groupStateTopic(groupsPattern, o.structureId, g), () => JSON.stringify(groupState(r, o.processor, o.now())));
      }
      fresh.clear();
    }));
  }

  return {
    attach(processed$) {
      if (groupsPattern === null) return;
      subscriptions.push(processed$.subscribe((out) => {
        if (out.kind !== 'frame') return;
        for (const r of out.results) {
          latest.set(r.groupId, r);
          fresh.add(r.groupId);
        }
      }));
    },
    seedAlarms(alarms) {
      open.seed(alarms);
      publishAlarms();
    },
    onTransitions(transitions) {
      if (open.apply(transitions)) publishAlarms();
    },
    counters: () => ({ open_alarms: o.levels === null ? null : open.counts(o.levels), component_faults: faults.list() }),
    async stop() {
      for (const s of subscriptions) s.unsubscribe();
      await publisher.idle(2_000);
    },
  };
}
