import { rangeAtCycles, type SnCurve } from '../fatigue/sn-curve.js';
import { esc, tickLabel } from './format.js';

export interface FatigueChartSpec {
  title: string;
  /** Hot-spot stress-range histogram: bin i holds [i w, (i+1) w) MPa, the last bin everything above. */
  binWidthMPa: number;
  counts: readonly number[];
  curve: SnCurve;
  widthPx: number;
  heightPx?: number;
}

const M = { left: 62, right: 28, top: 26, bottom: 46 };
const N_MIN = 0.1;
const N_MAX = 1e9;
const r1 = (v: number) => (Math.round(v * 10) / 10).toString();

/**
 * A detail's stress-range histogram against its S-N curve, as an SVG element (a string): stress
 * range (hot spot, MPa) up, cycles across on a log scale; each bin a bar as long as the cycles
 * counted in it, the curve (with the partial factors) the cycles to failure at each range, flat
 * below the cut-off. Pure.
 */
export function fatigueChart(spec: FatigueChartSpec): string {
  const W = spec.widthPx, H = spec.heightPx ?? 260;
  const pw = W - M.left - M.right, ph = H - M.top - M.bottom;
  const w = spec.binWidthMPa;
  const last = spec.counts.length - 1;
  let top = 0;
  spec.counts.forEach((c, i) => { if (c > 0) top = Math.max(top, (i + (i === last ? 1.5 : 1)) * w); });
  const atRef = rangeAtCycles(spec.curve, 2e6);
  const yMax = Math.max(top, 1.25 * atRef);
  const X = (n: number) => M.left + ((Math.log10(Math.min(Math.max(n, N_MIN), N_MAX)) - Math.log10(N_MIN)) / (Math.log10(N_MAX) - Math.log10(N_MIN))) * pw;
  const Y = (v: number) => M.top + ph - (Math.min(v, yMax) / yMax) * ph;
  const parts: string[] = [];
  parts.push(`<svg xmlns="http://www.w3.org/2000/svg" class="chart fatigue-chart" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}" role="img" aria-label="${esc(spec.title)}">`);
  parts.push(`<title>${esc(spec.title)}</title>`);
  parts.push(`<rect class="plot" x="${M.left}" y="${M.top}" width="${pw}" height="${ph}"/>`);
  for (let e = -1; e <= 9; e++) {
    const x = X(10 ** e);
    parts.push(`<line class="grid" x1="${r1(x)}" x2="${r1(x)}" y1="${M.top}" y2="${M.top + ph}"/>`);
    if (e >= 0 && e % 2 === 0) parts.push(`<text class="tick" x="${r1(x)}" y="${M.top + ph + 14}" text-anchor="middle">1e${e}</text>`);
  }
  const step = niceStep(yMax / 5);
  for (let v = 0; v <= yMax + 1e-9; v += step) {
    parts.push(`<line class="grid" x1="${M.left}" x2="${M.left + pw}" y1="${r1(Y(v))}" y2="${r1(Y(v))}"/>`);
    parts.push(`<text class="tick" x="${M.left - 5}" y="${r1(Y(v) + 3.5)}" text-anchor="end">${tickLabel(v)}</text>`);
  }
  spec.counts.forEach((c, i) => {
    if (!(c > 0)) return;
    const lo = i * w, hi = i === last ? yMax : (i + 1) * w;
    const ya = Y(hi), yb = Y(lo);
    parts.push(`<rect class="bin" data-bin="${i}" data-cycles="${c}" x="${M.left}" y="${r1(ya)}" width="${r1(Math.max(1, X(c) - M.left))}" height="${r1(Math.max(1, yb - ya - 0.5))}"><title>${esc(`${tickLabel(lo)}${i === last ? ' MPa and above' : `–${tickLabel(hi)} MPa`}: ${tickLabel(c)} cycles`)}</title></rect>`);
  });
  const pts: string[] = [];
  for (let e = 3; e <= 9.0001; e += 0.05) {
    const v = rangeAtCycles(spec.curve, Math.min(10 ** e, 1e8));
    if (v <= yMax) pts.push(`${r1(X(10 ** e))},${r1(Y(v))}`);
  }
  parts.push(`<polyline class="sn-curve" points="${pts.join(' ')}"/>`);
  const cut = rangeAtCycles(spec.curve, 1e8);
  parts.push(`<text class="band-label" x="${M.left + pw - 4}" y="${r1(Y(cut) - 3)}" text-anchor="end">cut-off ${tickLabel(Number(cut.toPrecision(3)))} MPa</text>`);
  parts.push(`<text class="axis-label" x="${M.left + pw}" y="${M.top + ph + 26}" text-anchor="end">cycles (log scale)</text>`);
  parts.push(`<text class="axis-label" x="12" y="${r1(M.top + ph / 2)}" text-anchor="middle" transform="rotate(-90 12 ${r1(M.top + ph / 2)})">hot-spot stress range, MPa</text>`);
  parts.push(`<text class="chart-title" x="${M.left}" y="${M.top - 8}">${esc(spec.title)}</text>`);
  parts.push(`<rect class="bin" x="${M.left}" y="${H - 14}" width="12" height="8"/><text class="legend" x="${M.left + 16}" y="${H - 6}">cycles counted per range bin</text>`);
  parts.push(`<line class="sn-curve" x1="${M.left + 200}" x2="${M.left + 212}" y1="${H - 10}" y2="${H - 10}"/><text class="legend" x="${M.left + 216}" y="${H - 6}">S-N curve with the partial factors (cycles to failure)</text>`);
  parts.push('</svg>');
  return parts.join('');
}

function niceStep(raw: number): number {
  const mag = 10 ** Math.floor(Math.log10(raw));
  const f = raw / mag;
  return (f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10) * mag;
}
