/** Text helpers for the report: escaping, numbers, times. Pure. */

/** Escapes text for HTML and SVG content and attribute values. */
export function esc(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');
}

/** A number with `digits` decimals, or an en dash for a missing value. */
export function num(v: number | null | undefined, digits = 2): string {
  return v === null || v === undefined || !Number.isFinite(v) ? '–' : v.toFixed(digits);
}

/** Epoch ms as `YYYY-MM-DD HH:MM:SS.mmm` UTC. */
export function isoTime(ms: number): string {
  return new Date(ms).toISOString().replace('T', ' ').replace('Z', '');
}

/** Axis label of a time: HH:MM (or HH:MM:SS when the step is under a minute) UTC. */
export function clockLabel(ms: number, stepMs: number): string {
  const iso = new Date(ms).toISOString();
  return stepMs < 60_000 ? iso.slice(11, 19) : iso.slice(11, 16);
}

/** Compact number for axis ticks: no trailing zeros, at most 4 significant decimals. */
export function tickLabel(v: number): string {
  if (v === 0) return '0';
  const s = Math.abs(v) >= 1e5 || Math.abs(v) < 1e-3 ? v.toExponential(1) : Number(v.toPrecision(6)).toString();
  return s.replace('-', '−');
}
