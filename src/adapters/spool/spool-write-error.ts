/**
 * The spool's disk refused an append (full disk, I/O error): the points were NOT stored and the
 * segment was cut back to its last whole line. The caller must not acknowledge their messages.
 */
export class SpoolWriteError extends Error {
  constructor(
    readonly points: number,
    readonly bytes: number,
    /** The file system's error code, e.g. ENOSPC; null when it gave none. */
    readonly code: string | null,
    cause: unknown,
  ) {
    super(`spool cannot be written: ${points} points (${bytes} bytes) not stored: ${cause instanceof Error ? cause.message : String(cause)}`, { cause });
    this.name = 'SpoolWriteError';
  }
}

/** The error code of a file-system error (`ENOSPC`...), or null. */
export function fsErrorCode(err: unknown): string | null {
  const code = (err as { code?: unknown } | null)?.code;
  return typeof code === 'string' ? code : null;
}
