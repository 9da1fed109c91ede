/**
 * CPU time of the processes sharing the benchmark machine, as a percentage of one core over an
 * interval: this process by `process.cpuUsage()` (every thread), the others from
 * `/proc/<pid>/stat` (utime + stime, in USER_HZ = 100 ticks per second on Linux). Elsewhere, or
 * for a process that is gone, the figure is NaN. It says which process a rate is waiting for.
 */
import { readFileSync } from 'node:fs';

const USER_HZ = 100;

function procCpuSeconds(pid: number): number {
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    // Fields after the command name (which may hold spaces) start after the last ')'.
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    return (Number(fields[11]) + Number(fields[12])) / USER_HZ; // utime, stime: fields 14 and 15 of the line
  } catch {
    return Number.NaN;
  }
}

const selfCpuSeconds = (): number => {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1e6;
};

export class CpuMeter {
  private readonly start: Map<string, number>;
  private readonly startMs = performance.now();

  /** `others`: name -> pid of the processes to watch besides this one (named `self`). */
  constructor(private readonly others: Readonly<Record<string, number>>) {
    this.start = this.read();
  }

  /** Percent of one core per process since construction. */
  percent(): Record<string, number> {
    const seconds = (performance.now() - this.startMs) / 1000;
    const now = this.read();
    const out: Record<string, number> = {};
    for (const [name, t] of now) out[name] = Math.round((100 * (t - this.start.get(name)!)) / seconds);
    return out;
  }

  private read(): Map<string, number> {
    const m = new Map<string, number>([['self', selfCpuSeconds()]]);
    for (const [name, pid] of Object.entries(this.others)) m.set(name, procCpuSeconds(pid));
    return m;
  }
}
