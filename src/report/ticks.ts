/** Axis ticks at "nice" steps (1, 2, 5 x 10^k) and time steps people read. Pure. */

/** Ticks covering [lo, hi] with about `count` steps: the step and the tick values (new array). */
export function niceTicks(lo: number, hi: number, count = 5): { step: number; ticks: number[] } {
  if (!(hi > lo)) {
    const pad = lo === 0 ? 1 : Math.abs(lo) * 0.1;
    return niceTicks(lo - pad, lo + pad, count);
  }
  const raw = (hi - lo) / count;
  const mag = 10 ** Math.floor(Math.log10(raw));
  const f = raw / mag;
  const step = (f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10) * mag;
  const ticks: number[] = [];
  for (let t = Math.ceil(lo / step) * step; t <= hi + step * 1e-9; t += step) ticks.push(Math.abs(t) < step * 1e-9 ? 0 : t);
  return { step, ticks };
}

const TIME_STEPS_MS = [
  100, 200, 500, 1_000, 2_000, 5_000, 10_000, 15_000, 30_000, 60_000, 120_000, 300_000, 600_000, 900_000,
  1_800_000, 3_600_000, 7_200_000, 10_800_000, 21_600_000, 43_200_000, 86_400_000,
];

/** Time ticks (epoch ms, aligned to the step in UTC) over [fromMs, toMs], about `count` of them. */
export function timeTicks(fromMs: number, toMs: number, count = 6): { step: number; ticks: number[] } {
  const span = Math.max(toMs - fromMs, 1);
  const step = TIME_STEPS_MS.find((s) => span / s <= count) ?? Math.ceil(span / count / 86_400_000) * 86_400_000;
  const ticks: number[] = [];
  for (let t = Math.ceil(fromMs / step) * step; t <= toMs; t += step) ticks.push(t);
  return { step, ticks };
}
