/** A one-line progress bar with rate and time left, for long replays. Writes to the given stream. */
export class ProgressBar {
  private lastDraw = 0;
  private readonly started: number;

  constructor(
    private readonly total: number,
    private readonly out: { write(s: string): unknown; isTTY?: boolean },
    private readonly now: () => number,
    private readonly label = 'replay',
  ) {
    this.started = now();
  }

  /** Redraws at most ten times a second, or always when `force`. */
  update(done: number, force = false): void {
    const t = this.now();
    if (!force && t - this.lastDraw < 100) return;
    this.lastDraw = t;
    const elapsedS = Math.max((t - this.started) / 1000, 1e-3);
    const rate = done / elapsedS;
    const fraction = this.total > 0 ? Math.min(done / this.total, 1) : 0;
    const width = 30;
    const filled = Math.round(fraction * width);
    const leftS = rate > 0 && this.total > 0 ? Math.max(this.total - done, 0) / rate : Number.NaN;
    const line = `${this.label} [${'#'.repeat(filled)}${'.'.repeat(width - filled)}] ${(fraction * 100).toFixed(1)}% `
      + `${done}/${this.total} messages, ${Math.round(rate)} msg/s, ${Number.isFinite(leftS) ? formatDuration(leftS) : '--:--'} left`;
    this.out.write(this.out.isTTY ? `\r${line}` : `${line}\n`);
  }

  finish(done: number): void {
    this.update(done, true);
    if (this.out.isTTY) this.out.write('\n');
  }
}

export function formatDuration(s: number): string {
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  const sec = Math.floor(s % 60);
  return h > 0 ? `${h}:${String(m).padStart(2, '0')}:${String(sec).padStart(2, '0')}` : `${m}:${String(sec).padStart(2, '0')}`;
}
