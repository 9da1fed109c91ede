import { spawn, type ChildProcess } from 'node:child_process';

/** `npm start` running as a process group of its own (so an interrupt reaches the whole tree, as Ctrl-C does). */
export interface DemoProcess {
  proc: ChildProcess;
  /** Everything printed so far (stdout and stderr), in order. */
  output(): string;
  /** Resolves with the first match of `pattern` in the output; rejects after `ms`. */
  waitFor(pattern: RegExp, ms: number): Promise<RegExpMatchArray>;
  /** Sends SIGINT to the group and waits for the launcher to exit; its exit code. */
  interrupt(ms?: number): Promise<number | null>;
}

export function startDemo(cwd: string, args: string[] = [], env: Record<string, string> = {}): DemoProcess {
  const proc = spawn('npm', ['start', ...(args.length ? ['--', ...args] : [])], {
    cwd, detached: true, stdio: ['ignore', 'pipe', 'pipe'], env: { ...process.env, ...env },
  });
  let text = '';
  const listeners = new Set<() => void>();
  const take = (chunk: Buffer) => { text += chunk.toString('utf8'); for (const l of listeners) l(); };
  proc.stdout!.on('data', take);
  proc.stderr!.on('data', take);
  const exited = new Promise<number | null>((resolve) => proc.once('exit', (code) => resolve(code)));
  return {
    proc,
    output: () => text,
    waitFor: (pattern, ms) => new Promise((resolve, reject) => {
      const check = () => {
        const m = text.match(pattern);
        if (m === null) return;
        listeners.delete(check);
        clearTimeout(timer);
        resolve(m);
      };
      const timer = setTimeout(() => { listeners.delete(check); reject(new Error(`no ${pattern} within ${ms} ms; output:\n${text}`)); }, ms);
      listeners.add(check);
      check();
    }),
    interrupt: async (ms = 30_000) => {
      if (proc.exitCode !== null) return proc.exitCode;
      try { process.kill(-proc.pid!, 'SIGINT'); } catch { return proc.exitCode; }
      const timer = setTimeout(() => { try { process.kill(-proc.pid!, 'SIGKILL'); } catch { /* gone */ } }, ms);
      const code = await exited;
      clearTimeout(timer);
      return code;
    },
  };
}
