import type { PointWriter } from '../../model/point.js';
import type { AlarmBatch } from '../operator.js';
import type { AlarmDispatcher } from '../routing/dispatch.js';
import type { DeliveryRecord } from '../routing/delivery-record.js';
import { transitionToPoint } from '../routing/points.js';
import { saveSnapshot } from './snapshot-file.js';

export interface BatchHandlerOptions {
  /** Snapshot file; written atomically after every batch, before anyone is told. */
  snapshotPath?: string;
  dispatcher: AlarmDispatcher;
  /** Where `sw_alarm` points go. */
  sink?: PointWriter;
}

/**
 * What to do with each batch from `alarmBatches`: save the engine snapshot (so a raised alarm
 * survives a restart), write the transitions as points, then deliver them. Use inside concatMap
 * so batches are handled in order.
 */
export function createBatchHandler(o: BatchHandlerOptions): (batch: AlarmBatch) => Promise<DeliveryRecord[]> {
  return async (batch) => {
    if (o.snapshotPath !== undefined) await saveSnapshot(o.snapshotPath, batch.snapshot());
    if (o.sink !== undefined && batch.transitions.length > 0) await o.sink.write(batch.transitions.map(transitionToPoint));
    return o.dispatcher.dispatch(batch);
  };
}
