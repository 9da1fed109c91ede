import { clockLabel, esc, tickLabel } from './format.js';
import type { Gap, Segment } from './series.js';
import { niceTicks, timeTicks } from './ticks.js';

/** A line of a chart: segments are drawn as separate polylines, so a gap is a break in the line. */
export interface ChartSeries { id: string; label: string; color: string; segments: readonly Segment[]; dashed?: boolean }
/** An alarm band: shaded beyond `upper` (up to the top) or below `lower`. */
export interface ChartBand { level: string; upper?: number; lower?: number }

export interface ChartSpec {
  title: string;
  unit: string;
  fromMs: number;
  toMs: number;
  series: readonly ChartSeries[];
  bands?: readonly ChartBand[];
  gaps?: readonly Gap[];
  widthPx: number;
  heightPx?: number;
}

const M = { left: 62, right: 28, top: 26, bottom: 46 };
const BAND_FILLS = ['#f3d9a4', '#eeb38f', '#e08a80', '#c96a78'];
const r1 = (v: number) => (Math.round(v * 10) / 10).toString();

/**
 * One time-series chart as an SVG element (a string), scaled to its data: limits beyond the data's
 * range are named at the top or bottom edge (with an arrow), not drawn. Pure.
 */
export function lineChart(spec: ChartSpec): string {
  const W = spec.widthPx, H = spec.heightPx ?? 220;
  const pw = W - M.left - M.right, ph = H - M.top - M.bottom;
  let lo = Infinity, hi = -Infinity;
  for (const s of spec.series) for (const seg of s.segments) for (const v of seg.v) { if (v < lo) lo = v; if (v > hi) hi = v; }
  const hasData = lo <= hi;
  if (!hasData) { lo = 0; hi = 1; }
  // The axis is the data's range: a limit beyond it is named at that edge with an arrow, never
  // drawn by stretching the axis (a 70 MPa event must not be a blip under a 250 MPa band).
  const pad = Math.max((hi - lo) * 0.05, 1e-9);
  const above: string[] = [], below: string[] = [];
  const bands = (spec.bands ?? []).filter((b) => {
    const lim = b.upper ?? b.lower;
    if (lim === undefined) return false;
    if (lim > hi + pad) { above.push(`${b.level} ${tickLabel(lim)}`); return false; }
    if (lim < lo - pad) { below.push(`${b.level} ${tickLabel(lim)}`); return false; }
    return true;
  });
  const yt = niceTicks(lo, hi, 5);
  const y0 = Math.min(lo, yt.ticks[0]), y1 = Math.max(hi, yt.ticks[yt.ticks.length - 1]);
  const t0 = spec.fromMs, t1 = Math.max(spec.toMs, spec.fromMs + 1);
  const X = (t: number) => M.left + ((t - t0) / (t1 - t0)) * pw;
  const Y = (v: number) => M.top + ph - ((v - y0) / (y1 - y0 || 1)) * ph;
  const parts: string[] = [];
  parts.push(`<svg xmlns="http://www.w3.org/2000/svg" class="chart" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}" role="img" aria-label="${esc(spec.title)}">`);
  parts.push(`<title>${esc(spec.title)}</title>`);
  parts.push(`<rect class="plot" x="${M.left}" y="${M.top}" width="${pw}" height="${ph}"/>`);
  bands.forEach((b, i) => {
    const fill = BAND_FILLS[Math.min(i, BAND_FILLS.length - 1)];
    const [ya, yb] = b.upper !== undefined ? [M.top, Y(b.upper)] : [Y(b.lower!), M.top + ph];
    parts.push(`<rect class="band" data-level="${esc(b.level)}" x="${M.left}" y="${r1(ya)}" width="${pw}" height="${r1(Math.max(0, yb - ya))}" fill="${fill}"/>`);
    const ly = b.upper !== undefined ? Y(b.upper) : Y(b.lower!);
    parts.push(`<line class="limit" x1="${M.left}" x2="${M.left + pw}" y1="${r1(ly)}" y2="${r1(ly)}"/>`);
    parts.push(`<text class="band-label" x="${M.left + pw - 4}" y="${r1(ly + (b.upper !== undefined ? -3 : 11))}" text-anchor="end">${esc(b.level)} ${tickLabel((b.upper ?? b.lower)!)}</text>`);
  });
  for (const g of spec.gaps ?? []) {
    const xa = X(Math.max(g.fromMs, t0)), xb = X(Math.min(g.toMs, t1));
    parts.push(`<rect class="gap" x="${r1(xa)}" y="${M.top}" width="${r1(Math.max(1, xb - xa))}" height="${ph}"><title>no data ${esc(clockLabel(g.fromMs, 1))} – ${esc(clockLabel(g.toMs, 1))}</title></rect>`);
    if (xb - xa > 40) parts.push(`<text class="gap-label" x="${r1((xa + xb) / 2)}" y="${M.top + 12}" text-anchor="middle">no data</text>`);
  }
  for (const t of yt.ticks) {
    if (t < y0 || t > y1) continue;
    parts.push(`<line class="grid" x1="${M.left}" x2="${M.left + pw}" y1="${r1(Y(t))}" y2="${r1(Y(t))}"/>`);
    parts.push(`<text class="tick" x="${M.left - 5}" y="${r1(Y(t) + 3.5)}" text-anchor="end">${tickLabel(t)}</text>`);
  }
  const tt = timeTicks(t0, t1, Math.max(2, Math.floor(pw / 110)));
  for (const t of tt.ticks) {
    parts.push(`<line class="grid" x1="${r1(X(t))}" x2="${r1(X(t))}" y1="${M.top}" y2="${M.top + ph}"/>`);
    parts.push(`<text class="tick" x="${r1(X(t))}" y="${M.top + ph + 14}" text-anchor="middle">${clockLabel(t, tt.step)}</text>`);
  }
  parts.push(`<text class="axis-label" x="${M.left + pw}" y="${M.top + ph + 26}" text-anchor="end">time (UTC)</text>`);
  // The unit runs up the y axis, clear of the title above the plot.
  parts.push(`<text class="axis-label" x="12" y="${r1(M.top + ph / 2)}" text-anchor="middle" transform="rotate(-90 12 ${r1(M.top + ph / 2)})">${esc(spec.unit)}</text>`);
  parts.push(`<text class="chart-title" x="${M.left}" y="${M.top - 8}">${esc(spec.title)}</text>`);
  if (above.length) parts.push(`<text class="chart-note off-scale" data-edge="top" x="${M.left + 4}" y="${M.top + 12}">${esc(`▲ above the plot: ${above.join(', ')}`)}</text>`);
  if (below.length) parts.push(`<text class="chart-note off-scale" data-edge="bottom" x="${M.left + 4}" y="${M.top + ph - 5}">${esc(`▼ below the plot: ${below.join(', ')}`)}</text>`);
  for (const s of spec.series) {
    for (const seg of s.segments) {
      const pts = seg.t.map((t, i) => `${r1(X(t))},${r1(Y(seg.v[i]))}`).join(' ');
      if (seg.t.length === 1) parts.push(`<circle class="series-dot" data-series="${esc(s.id)}" cx="${r1(X(seg.t[0]))}" cy="${r1(Y(seg.v[0]))}" r="1.5" fill="${s.color}"/>`);
      else parts.push(`<polyline class="series" data-series="${esc(s.id)}" points="${pts}" stroke="${s.color}"${s.dashed ? ' stroke-dasharray="5 3"' : ''}/>`);
    }
  }
  // Legend under the plot, clear of the limit labels inside it.
  let lx = M.left;
  for (const s of spec.series) {
    parts.push(`<line x1="${r1(lx)}" x2="${r1(lx + 12)}" y1="${H - 8}" y2="${H - 8}" stroke="${s.color}" stroke-width="2"${s.dashed ? ' stroke-dasharray="4 2"' : ''}/>`);
    parts.push(`<text class="legend" x="${r1(lx + 16)}" y="${H - 4}">${esc(s.label)}</text>`);
    lx += 26 + 6.2 * s.label.length;
  }
  if (!hasData) parts.push(`<text class="empty" x="${M.left + pw / 2}" y="${M.top + ph / 2}" text-anchor="middle">no data in this period</text>`);
  parts.push('</svg>');
  return parts.join('');
}
