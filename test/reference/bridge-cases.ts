import { bridgeStrainMicro, gaugeFactorAt, leadWireFactor } from '../../src/mechanics/bridge.js';
import { digits, type ReferenceCase } from './case.js';

/** Output ratio of a Wheatstone bridge from its four arm resistances (arms 1-2 and 4-3 as the two dividers). */
export function bridgeFromArms(r1: number, r2: number, r3: number, r4: number): number {
  return r1 / (r1 + r2) - r4 / (r3 + r4);
}

const DIVIDER = 'Wheatstone-bridge divider equations (J. W. Dally and W. F. Riley, Experimental Stress Analysis, strain-gauge circuits chapter; from memory)';
export const BRIDGE_R = 350, BRIDGE_GF = 2.1;
const R = BRIDGE_R, GF = BRIDGE_GF;
export const QUARTER_STRAINS = [-3000, -100, 10, 1000, 5000];
const Q = 'bridge output to strain (microstrain)';

export const BRIDGE_CASES: ReferenceCase[] = [
  // Quarter bridge: one active arm R (1 + GF eps); the exact divider, non-linearity included.
  ...QUARTER_STRAINS.map((eps): ReferenceCase => ({
    quantity: Q, label: `quarter bridge at ${eps} microstrain`, source: DIVIDER, expected: eps, tolerance: digits(9),
    actual: () => bridgeStrainMicro(bridgeFromArms(R * (1 + GF * eps * 1e-6), R, R, R), GF, 0),
  })),
  // Half bridge, opposite strains in adjacent arms: linear, eps = 2 vr / GF.
  { quantity: Q, label: 'half bridge at 800 microstrain', source: DIVIDER, expected: 800, tolerance: digits(9),
    actual: () => bridgeStrainMicro(bridgeFromArms(R * (1 + GF * 800e-6), R * (1 - GF * 800e-6), R, R), GF, 1) },
  // Full bridge, four active arms: linear, eps = vr / GF.
  { quantity: Q, label: 'full bridge at -650 microstrain', source: DIVIDER, expected: -650, tolerance: digits(9),
    actual: () => { const x = GF * -650e-6; return bridgeStrainMicro(bridgeFromArms(R * (1 + x), R * (1 - x), R * (1 + x), R * (1 - x)), GF, 2); } },
  // 2-wire quarter bridge, lead resistance 3.2 ohm in the active arm: the bridge sees R x / (R + RL);
  // strain back with the lead factor 1 + RL / Rg (strain-gauge literature; from memory). The divider
  // is not linear, hence the looser tolerance (the test's toBeCloseTo(1000, 0)).
  { quantity: 'bridge output to strain, lead resistance corrected (microstrain)', label: 'quarter bridge, 3.2 ohm lead, 1000 microstrain', source: 'lead-wire desensitisation Rg / (Rg + RL) (strain-gauge literature; from memory)', expected: 1000, tolerance: digits(0),
    actual: () => (bridgeStrainMicro(bridgeFromArms(R * (1 + GF * 1000e-6) + 3.2, R, R, R) - bridgeFromArms(R + 3.2, R, R, R), GF, 0)) * leadWireFactor(3.2, R) },
  { quantity: 'bridge factors (dimensionless)', label: 'lead-wire factor 1 + 3.2 / 350', source: 'lead-wire desensitisation (strain-gauge literature; from memory)', expected: 1 + 3.2 / 350, tolerance: digits(12),
    actual: () => leadWireFactor(3.2, R) },
  // Linear model GF(T) = GF_ref (1 + c (T - T_ref)): 2.0 x (1 + 1e-4 x 50) = 2.01.
  { quantity: 'bridge factors (dimensionless)', label: 'gauge factor at 74 degC, 1e-4 per degC from 2.0 at 24', source: 'linear gauge-factor temperature model (common practice)', expected: 2.01, tolerance: digits(12),
    actual: () => gaugeFactorAt(2.0, 1e-4, 74, 24) },
];
