import { vi } from 'vitest';
import { main } from '../../src/cli/main.js';

/** Runs a strainward command in this process (as `strainward <args>`): its exit code and what it printed. */
export async function runCli(args: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const o = vi.spyOn(process.stdout, 'write').mockImplementation((c) => { out += String(c); return true; });
  const e = vi.spyOn(process.stderr, 'write').mockImplementation((c) => { err += String(c); return true; });
  try {
    return { code: await main(['node', 'strainward', ...args]), out, err };
  } finally {
    o.mockRestore();
    e.mockRestore();
  }
}
