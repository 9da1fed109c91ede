import { loadStructureFile } from '../../src/config/load.js';
import type { CompiledGroup, CompiledStructure } from '../../src/config/compile.js';
import { evaluateGroup } from '../../src/mechanics/evaluate-group.js';
import { createGroupOutput, GROUP_PLANE, GROUP_SOLID, type GroupOutput } from '../../src/mechanics/group-model.js';
import type { SimScan } from '../../simulators/run.js';

export const CONFIG_PATH = new URL('../../config/brannock-mere.yaml', import.meta.url).pathname;
export const START_MS = Date.UTC(2025, 5, 1, 6, 0, 0);

let cached: Promise<CompiledStructure> | null = null;
/** The example structure, compiled once per test file. */
export function brannock(): Promise<CompiledStructure> {
  cached ??= loadStructureFile(CONFIG_PATH);
  return cached;
}

/** Element readings (NaN for null or absent) and the companion reading of a group from one scan. */
export function groupRaw(g: CompiledGroup, scan: SimScan): { raw: Float64Array; companion: number } {
  const v = (ch: string) => { const x = scan.values[ch]; return x === null || x === undefined ? Number.NaN : x; };
  return { raw: Float64Array.from(g.elementChannels, v), companion: g.companion ? v(g.companion.channelId) : Number.NaN };
}

/** Evaluates one group from one scan at the given temperature; returns the output and the group-space stress. */
export function evaluateFromScan(g: CompiledGroup, scan: SimScan, tempC: number, out: GroupOutput = createGroupOutput(g.model.m)): { out: GroupOutput; stress: number[] } {
  const { raw, companion } = groupRaw(g, scan);
  evaluateGroup(g.model, raw, tempC, companion, out);
  return { out, stress: groupSpaceStress(g, out) };
}

/** Stress in the group's own space from an evaluation output. */
export function groupSpaceStress(g: CompiledGroup, out: GroupOutput): number[] {
  const s = out.stressMPa;
  if (g.model.kind === GROUP_PLANE) return [s[0], s[1], s[5]];
  if (g.model.kind === GROUP_SOLID) return Array.from(s);
  return [out.axialStressMPa];
}
