import { spawn, type ChildProcess } from 'node:child_process';
import { createWriteStream, type WriteStream } from 'node:fs';

/** `strainward run` as its own process, its log appended to a file; killed or stopped on demand. */
export class ProcessorProcess {
  private child: ChildProcess | null = null;
  private readonly log: WriteStream;
  starts = 0;

  constructor(private readonly runtimeFile: string, logFile: string, private readonly env: NodeJS.ProcessEnv = process.env, private readonly args = ['run', '-c', runtimeFile]) {
    this.log = createWriteStream(logFile, { flags: 'a' });
  }

  /** Starts it and waits for its `started` log line (at most 30 s). */
  async start(): Promise<void> {
    const child = spawn(process.execPath, ['bin/strainward.mjs', ...this.args], { stdio: ['ignore', 'pipe', 'pipe'], env: this.env });
    this.child = child;
    this.starts++;
    let text = '';
    const keep = (chunk: Buffer) => { this.log.write(chunk); if (text.length < 1e6) text += chunk.toString('utf8'); };
    child.stdout!.on('data', keep);
    child.stderr!.on('data', keep);
    const deadline = Date.now() + 30_000;
    while (!/"started"|started/.test(text)) {
      if (child.exitCode !== null) throw new Error(`processor exited with ${child.exitCode} at start: ${text.slice(-2000)}`);
      if (Date.now() > deadline) throw new Error(`processor did not start: ${text.slice(-2000)}`);
      await new Promise((r) => setTimeout(r, 50));
    }
  }

  /** SIGKILL: a crash, nothing flushed, nothing said. */
  async kill(): Promise<void> { await this.signal('SIGKILL'); }

  /** SIGTERM: an orderly stop (in-flight work written and acknowledged). */
  async stop(): Promise<void> { await this.signal('SIGTERM'); }

  get running(): boolean { return this.child !== null && this.child.exitCode === null && this.child.signalCode === null; }

  private async signal(sig: NodeJS.Signals): Promise<void> {
    const c = this.child;
    if (c === null || c.exitCode !== null || c.signalCode !== null) return;
    await new Promise<void>((resolve) => { c.once('exit', () => resolve()); c.kill(sig); });
    this.child = null;
  }

  async close(): Promise<void> {
    await this.stop();
    await new Promise<void>((r) => this.log.end(r));
  }
}
