/**
 * Lines the database refused for their content (HTTP 400/413/422). Retrying them would block the
 * spool's drain for ever, so they are set aside in `<dir>/refused/refused-<UTC date>.lp`, one file
 * per day, for an operator to inspect and reload.
 */
import { appendFile, mkdir } from 'node:fs/promises';
import { join } from 'node:path';

/** Appends `lines` to the day's refused file under `dir` (`nowMs` picks the day). */
export async function setAsideRefused(dir: string, lines: readonly string[], nowMs: number): Promise<void> {
  const refusedDir = join(dir, 'refused');
  await mkdir(refusedDir, { recursive: true });
  await appendFile(join(refusedDir, `refused-${new Date(nowMs).toISOString().slice(0, 10)}.lp`), lines.join('\n') + '\n', { mode: 0o600 });
}
