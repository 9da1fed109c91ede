import { spawn } from 'node:child_process';

/** Runs `bench/support/replay-child.ts` with the replay arguments given; resolves its JSON line. */
export function replayInChild(args: readonly string[], nodeFlags: readonly string[] = []): Promise<Record<string, unknown> & { messages: number; frames: number; results: number; wall_s: number; cpu_s: number; peak_rss_mb: number; median_rss_mb: number; live_heap_mb: number; exit_code: number }> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ['--import', 'tsx', '--expose-gc', ...nodeFlags, 'bench/support/replay-child.ts', ...args], { stdio: ['ignore', 'pipe', 'inherit'] });
    let out = '';
    child.stdout.on('data', (d) => { out += String(d); });
    child.on('error', reject);
    child.on('exit', (code) => {
      const last = out.trim().split('\n').at(-1) ?? '';
      try { resolve(JSON.parse(last)); } catch { reject(new Error(`replay child exited ${code} without its figures: ${out.slice(-500)}`)); }
    });
  });
}
