import { mkdir, open, readFile, rename } from 'node:fs/promises';
import { dirname } from 'node:path';

/**
 * Write the engine snapshot atomically: a temporary file beside it, flushed to disk, then renamed
 * over the old one, so a crash leaves either the old or the new snapshot, never half of one.
 * Created 0600, like every file the processor keeps.
 */
export async function saveSnapshot(path: string, json: string): Promise<void> {
  await mkdir(dirname(path), { recursive: true });
  const tmp = `${path}.${process.pid}.tmp`;
  const fh = await open(tmp, 'w', 0o600);
  try {
    await fh.writeFile(json, 'utf8');
    await fh.sync();
  } finally {
    await fh.close();
  }
  await rename(tmp, path);
}

/** The saved snapshot text, or null when there is none yet. */
export async function loadSnapshot(path: string): Promise<string | null> {
  try {
    return await readFile(path, 'utf8');
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === 'ENOENT') return null;
    throw e;
  }
}
