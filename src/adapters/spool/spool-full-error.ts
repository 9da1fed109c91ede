/**
 * The spool is at its byte limit under the `block` policy (or one batch is larger than the whole
 * spool): the points were NOT stored. The caller must not acknowledge their messages.
 */
export class SpoolFullError extends Error {
  constructor(
    readonly points: number,
    readonly neededBytes: number,
    readonly usedBytes: number,
    readonly limitBytes: number,
  ) {
    super(`spool full: ${points} points (${neededBytes} bytes) do not fit, ${usedBytes} of ${limitBytes} bytes used`);
    this.name = 'SpoolFullError';
  }
}
