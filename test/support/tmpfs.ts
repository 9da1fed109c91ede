import { execFileSync } from 'node:child_process';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

/** A small real disk that fills up: a tmpfs mounted on a fresh folder (needs root, as CI runs). */
export interface Tmpfs {
  path: string;
  /** Unmounts (lazily if a failed test left files open) and removes the folder. */
  remove(): Promise<void>;
}

/** Mounts a tmpfs of `size` (mount's syntax, e.g. `256k`, `8m`) on a new folder named with `prefix`. */
export async function mountTmpfs(prefix: string, size: string): Promise<Tmpfs> {
  const path = await mkdtemp(join(tmpdir(), prefix));
  execFileSync('mount', ['-t', 'tmpfs', '-o', `size=${size}`, 'tmpfs', path]);
  return {
    path,
    async remove() {
      try { execFileSync('umount', [path]); } catch { execFileSync('umount', ['-l', path]); }
      await rm(path, { recursive: true, force: true });
    },
  };
}
