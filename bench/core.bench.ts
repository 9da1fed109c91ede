/**
 * bench:core - 3-element rosette samples per second, raw readings to principal stresses and von
 * Mises, through the optimised path (precomputed pseudo-inverse, preallocated arrays) and through a
 * naive path that builds and solves an ml-matrix system per sample. Also counts garbage
 * collections during the optimised loop: none means no allocation per sample. The main rate
 * changes the temperature on every sample (the worst case); `rate_temperature_held` keeps each
 * temperature for 50 samples, as a thermocouple read every 5 s gives it to 10 Hz strain scans.
 * Last line: {"bench":"core","rate":...,"naive_rate":...,"ratio":...}
 */
import { PerformanceObserver } from 'node:perf_hooks';
import { Matrix } from 'ml-matrix';
import { loadStructureFile } from '../src/config/load.js';
import { evaluateGroup, indicatedStrainMicro, totalStrainMicro } from '../src/mechanics/evaluate-group.js';
import { readingsFromStress } from '../src/mechanics/forward-model.js';
import { createGroupOutput, type GroupModel } from '../src/mechanics/group-model.js';
import { principal2, vonMises2 } from '../src/mechanics/principal.js';
import { solveLeastSquaresNaive } from '../src/mechanics/reduction.js';

const structure = await loadStructureFile('config/brannock-mere.yaml');
const g = structure.groups.find((x) => x.config.id === 'web-north-pier')!.model; // 0/45/90, quarter bridges in mV/V
const SETS = 4096;
const readings = new Float64Array(SETS * 3);
const temps = new Float64Array(SETS);
for (let k = 0; k < SETS; k++) {
  const t = 5 + (25 * k) / SETS;
  temps[k] = t;
  readingsFromStress(g, [80 * Math.sin(k), -30 + 20 * Math.cos(k * 0.7), 25 * Math.sin(k * 1.3)], t, Number.NaN, readings.subarray(k * 3, k * 3 + 3));
}

function optimised(count: number, holdTemperature = 1): number {
  const out = createGroupOutput(3);
  const raw = new Float64Array(3);
  let checksum = 0;
  let held = 0, tk = 0;
  for (let i = 0; i < count; i++) {
    const k = i & (SETS - 1);
    if (++held >= holdTemperature) { held = 0; tk = k; }
    raw[0] = readings[k * 3]; raw[1] = readings[k * 3 + 1]; raw[2] = readings[k * 3 + 2];
    evaluateGroup(g, raw, temps[tk], Number.NaN, out);
    checksum += out.principalMPa[0] + out.vonMisesMPa;
  }
  return checksum;
}

function naive(model: GroupModel, count: number): number {
  let checksum = 0;
  for (let i = 0; i < count; i++) {
    const k = i & (SETS - 1);
    const t = temps[k];
    const e: number[] = [];
    for (let j = 0; j < 3; j++) {
      const el = model.elements[j];
      const total = totalStrainMicro(el, indicatedStrainMicro(el, readings[k * 3 + j], t), t, model.zeroTempC);
      e.push(total - el.hostExpansionMicroPerDegC * (t - model.zeroTempC));
    }
    // Build the observation matrix and solve the least-squares system (SVD) for this sample.
    const x = Matrix.columnVector(Array.from(solveLeastSquaresNaive(model.reduction.obs, e, 3, 3)));
    const q = new Matrix([[...model.stiffness.slice(0, 3)], [...model.stiffness.slice(3, 6)], [...model.stiffness.slice(6, 9)]]);
    const s = q.mmul(x).mul(1e-6).to1DArray();
    const p = principal2(s[0], s[1], s[2], new Float64Array(3));
    checksum += p[0] + vonMises2(s[0], s[1], s[2]);
  }
  return checksum;
}

function timeIt(fn: () => number, count: number): { rate: number; checksum: number } {
  const t0 = process.hrtime.bigint();
  const checksum = fn();
  const s = Number(process.hrtime.bigint() - t0) / 1e9;
  return { rate: count / s, checksum };
}

let gcCount = 0;
const obs = new PerformanceObserver((list) => { gcCount += list.getEntries().length; });
optimised(200_000); // warm up the JIT
naive(g, 20_000);
const N = SETS * 5000; // whole cycles of the reading sets, so both paths average the same inputs
obs.observe({ entryTypes: ['gc'] });
const fast = timeIt(() => optimised(N), N);
await new Promise((r) => setImmediate(r)); // let the observer deliver
const gcDuringFast = gcCount;
obs.disconnect();
const held = timeIt(() => optimised(N, 50), N);
const NN = SETS * 100;
const slow = timeIt(() => naive(g, NN), NN);
if (Math.abs(fast.checksum / N - slow.checksum / NN) > 1e-6 * Math.abs(slow.checksum / NN) + 1e-9) {
  // Both loops cycle the same SETS readings; their mean result must agree.
  console.error(`paths disagree: ${fast.checksum / N} vs ${slow.checksum / NN}`);
  process.exitCode = 1;
}
console.log(`optimised: ${(fast.rate / 1e6).toFixed(2)} M samples/s over ${N} samples, garbage collections during the loop: ${gcDuringFast}`);
console.log(`optimised, each temperature held for 50 samples: ${(held.rate / 1e6).toFixed(2)} M samples/s`);
console.log(`naive ml-matrix solve per sample: ${(slow.rate / 1e6).toFixed(3)} M samples/s over ${NN} samples`);
console.log(JSON.stringify({ bench: 'core', rate: Math.round(fast.rate), naive_rate: Math.round(slow.rate), ratio: +(fast.rate / slow.rate).toFixed(1), gc_during_optimised: gcDuringFast, rate_temperature_held: Math.round(held.rate) }));
