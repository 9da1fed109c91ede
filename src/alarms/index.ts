/** Public API of strainward's alarms: configuration, engine, operator, routing, persistence. */
export * from './schema.js';
export * from './types.js';
export { createAlarmEngine, type AlarmEngine, type StepOutput } from './engine/engine.js';
export { alarms, alarmBatches, alarmTicks, type AlarmBatch, type AlarmOperatorOptions } from './operator.js';
export {
  AckCommandSchema, AckUserSchema, ackTopic, ackSubscription, ackVerdictTopic, ackUserOfTopic, ackUserMatcher, parseAckPayload, buildAckCommand, publishAck,
  type AckCommand, type AckVerdict,
} from './ack.js';
export { mosquittoAcl, type BrokerAclOptions } from './acl.js';
export { selectDeliveries, fillTopic, type Delivery } from './routing/select.js';
export { matchingRoutes, tierCount } from './routing/match.js';
export { alarmMessage, alarmText, type AlarmMessageBody } from './routing/format.js';
export { createMqttDelivery, type Publish } from './routing/mqtt-delivery.js';
export { createWebhookDelivery, type WebhookDeps } from './routing/webhook-delivery.js';
export { openAlarmLog, type AlarmLog, type AlarmLogLine } from './routing/alarm-log.js';
export { transitionToPoint, TRANSITION_CODES } from './routing/points.js';
export { createDispatcher, type AlarmDispatcher, type DispatchAdapters } from './routing/dispatch.js';
export type { DeliveryRecord, DeliveryAttempt } from './routing/delivery-record.js';
export { saveSnapshot, loadSnapshot } from './persistence/snapshot-file.js';
export { createBatchHandler, type BatchHandlerOptions } from './persistence/batch-handler.js';
