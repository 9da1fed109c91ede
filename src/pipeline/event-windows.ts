/**
 * Event windows of a summarised group, pure: the span of logger time whose results are stored at
 * full rate (overlapping spans merge), and the bounded pre-trigger ring the part before a trigger
 * comes from. The ring is one preallocated Float64Array per group (time, seq, quality bits, every
 * result quantity, every element strain per slot): its memory is fixed at start, pushing a result
 * allocates nothing, and the oldest result is overwritten (counted) when it is full.
 */
import { flagsFromBits, qualityBits } from '../model/quality.js';
import { RESULT_QUANTITIES, type GroupResult, type ResultQuantity } from '../model/result.js';
import { FieldPlaces } from '../results/field-places.js';
import { RESULT_FIELD_ORDER } from '../results/group-result.js';

const Q = RESULT_QUANTITIES.length;
/** Quantity name -> its place in a slot (RESULT_FIELD_ORDER). */
const SLOT_INDEX = new Map<string, number>(RESULT_FIELD_ORDER.map((name, i) => [name, i]));
/** Slot layout: time, seq (NaN: none), quality bits, then the values in RESULT_FIELD_ORDER, then the elements. */
const HEAD = 3;

export interface ResultRing {
  /** What every rebuilt result carries. */
  readonly structureId: string;
  readonly groupId: string;
  readonly zone: string;
  readonly loggerId: string;
  readonly elementGauges: readonly string[];
  readonly capacity: number;
  readonly slotSize: number;
  readonly data: Float64Array;
  /** Index of the oldest slot, and how many are filled. */
  head: number;
  size: number;
  /** Results overwritten while still within the pre-trigger span (the ring was too small for it). */
  overwritten: number;
  /** Field name -> place in a slot, by position (field-places.ts). */
  readonly slots: FieldPlaces<number>;
}

export function newResultRing(
  structureId: string, groupId: string, zone: string, loggerId: string, elementGauges: readonly string[], capacity: number,
): ResultRing {
  const slotSize = HEAD + Q + elementGauges.length;
  return { structureId, groupId, zone, loggerId, elementGauges, capacity, slotSize, data: new Float64Array(capacity * slotSize), head: 0, size: 0, overwritten: 0,
    slots: new FieldPlaces((name) => SLOT_INDEX.get(name)!),
  };
}

/** Bytes the ring holds: fixed at construction. */
export function ringBytes(ring: ResultRing): number {
  return ring.data.byteLength;
}

/** Drops the oldest results older than `fromMs` (they can be in no future window). */
export function ringDropBefore(ring: ResultRing, fromMs: number): void {
  while (ring.size > 0 && ring.data[ring.head * ring.slotSize] < fromMs) {
    ring.head = (ring.head + 1) % ring.capacity;
    ring.size--;
  }
}

/** Keeps a result (its values copied); the oldest is overwritten when full. */
export function ringPush(ring: ResultRing, r: GroupResult): void {
  if (ring.capacity === 0) return;
  if (ring.size === ring.capacity) {
    ring.head = (ring.head + 1) % ring.capacity;
    ring.size--;
    ring.overwritten++;
  }
  const d = ring.data;
  let o = ((ring.head + ring.size) % ring.capacity) * ring.slotSize;
  ring.size++;
  d[o++] = r.timeMs;
  d[o++] = r.seq ?? Number.NaN;
  d[o++] = qualityBits(r.flags);
  // Only the values the result has (for-in reads them off the object's own layout); the rest NaN.
  d.fill(Number.NaN, o, o + Q);
  const values = r.values as Record<string, number>;
  const slots = ring.slots;
  let i = 0;
  for (const name in values) d[o + slots.at(i++, name)] = values[name];
  o += Q;
  const gauges = ring.elementGauges;
  for (let e = 0; e < gauges.length; e++) d[o++] = r.elementStrainMicro[gauges[e]] ?? Number.NaN;
}

/** The result in slot i (0 = oldest), rebuilt with its fields in the order the original had. */
function ringResult(ring: ResultRing, i: number): GroupResult {
  const d = ring.data;
  let o = ((ring.head + i) % ring.capacity) * ring.slotSize;
  const timeMs = d[o++];
  const seq = d[o++];
  const bits = d[o++];
  const values: Partial<Record<ResultQuantity, number>> = {};
  for (let q = 0; q < Q; q++, o++) if (!Number.isNaN(d[o])) values[RESULT_FIELD_ORDER[q]] = d[o];
  const elementStrainMicro: Record<string, number> = {};
  for (const gauge of ring.elementGauges) { if (!Number.isNaN(d[o])) elementStrainMicro[gauge] = d[o]; o++; }
  return {
    structureId: ring.structureId, groupId: ring.groupId, zone: ring.zone, loggerId: ring.loggerId,
    timeMs, seq: Number.isNaN(seq) ? null : seq, values, elementStrainMicro, flags: flagsFromBits(bits),
  };
}

/** Hands every kept result at or after `fromMs` to `visit`, oldest first, and empties the ring. */
export function ringTakeFrom(ring: ResultRing, fromMs: number, visit: (r: GroupResult) => void): number {
  let n = 0;
  for (let i = 0; i < ring.size; i++) {
    if (ring.data[((ring.head + i) % ring.capacity) * ring.slotSize] < fromMs) continue;
    visit(ringResult(ring, i));
    n++;
  }
  ring.head = 0;
  ring.size = 0;
  return n;
}

/** The full-rate span of one group, logger time, inclusive; NaN while there is none. */
export interface WindowSpan {
  startMs: number;
  endMs: number;
}

export function newWindowSpan(): WindowSpan {
  return { startMs: Number.NaN, endMs: Number.NaN };
}

/** True when a result at tMs falls inside the span. */
export function inWindow(w: WindowSpan, tMs: number): boolean {
  return tMs >= w.startMs && tMs <= w.endMs;
}

/**
 * A trigger at tMs: the span becomes [tMs - beforeMs, tMs + afterMs], merged with the current one
 * when they overlap or touch. The ring holds only results outside every span so far, so taking it
 * from the span's start stores exactly the unwritten results the span now covers.
 */
export function openWindow(w: WindowSpan, tMs: number, beforeMs: number, afterMs: number): { merged: boolean; fromMs: number } {
  const start = tMs - beforeMs;
  const end = tMs + afterMs;
  const merged = !Number.isNaN(w.startMs) && start <= w.endMs && end >= w.startMs;
  w.startMs = merged ? Math.min(w.startMs, start) : start;
  w.endMs = merged ? Math.max(w.endMs, end) : end;
  return { merged, fromMs: w.startMs };
}
