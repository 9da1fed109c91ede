import type { CompiledStructure } from '../config/compile.js';
import { rezeroedModel } from '../mechanics/rezero.js';
import type { FrameProcessor } from '../pipeline/frame-processor.js';
import type { ZeroStep } from '../pipeline/zero-steps.js';
import type { RezeroRecord } from './schema.js';

/**
 * The step an audit record makes for this structure, or why it does not fit (another structure, a
 * group gone, its gauges changed since). Pure.
 */
export function stepFromRecord(structure: CompiledStructure, r: RezeroRecord): { ok: true; groupId: string; step: ZeroStep } | { ok: false; reason: string } {
  if (r.structure !== structure.structureId) return { ok: false, reason: `it is for structure ${r.structure}, not ${structure.structureId}` };
  const g = structure.groupsById.get(r.group_id);
  if (g === undefined) return { ok: false, reason: `the structure has no group "${r.group_id}" now` };
  const gauges = g.model.elements.map((el) => el.gaugeId);
  if (gauges.join(',') !== r.elements.map((e) => e.gauge).join(',')) {
    return { ok: false, reason: `group "${r.group_id}" has the gauges ${gauges.join(', ')} now, the record ${r.elements.map((e) => e.gauge).join(', ')}` };
  }
  if ((g.model.companion?.gaugeId ?? null) !== (r.companion?.gauge ?? null)) return { ok: false, reason: `the companion gauge of group "${r.group_id}" has changed` };
  const zeros = r.elements.map((e) => e.new_zero);
  const companion = r.companion?.new_zero ?? Number.NaN;
  const t = r.zero_temperature_degC.new;
  return {
    ok: true, groupId: g.config.id,
    step: { fromTimeMs: r.readings_time_ms, model: rezeroedModel(g.model, zeros, companion, t), elementZeros: zeros, companionZero: companion, zeroTempC: t, recordId: r.id },
  };
}

/**
 * Installs a recorded rezero in the frame processor: the one path for a rezero accepted now, one
 * restored at start and one replayed, so each applies from the same logger time with the same zeros.
 */
export function applyRezeroRecord(processor: FrameProcessor<unknown>, structure: CompiledStructure, r: RezeroRecord): { ok: true } | { ok: false; reason: string } {
  const s = stepFromRecord(structure, r);
  if (!s.ok) return s;
  processor.applyZeroStep(s.groupId, s.step);
  return { ok: true };
}
