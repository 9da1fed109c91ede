/**
 * Waiting with a bound: for an orderly stop that may never finish (its broker, database or etcd
 * gone), for a command's answer. The timer is cleared as soon as the promise settles, so it never
 * keeps the process alive after the work is done.
 */

/** True when `p` resolves within `ms`, false when the time runs out first; a rejection within it is rethrown. */
export function settlesWithin(p: Promise<unknown>, ms: number): Promise<boolean> {
  let timer: NodeJS.Timeout | undefined;
  const late = new Promise<boolean>((done) => { timer = setTimeout(() => done(false), ms); });
  return Promise.race([p.then(() => true), late]).finally(() => clearTimeout(timer));
}

/** `p`, or a rejection with `message` once `ms` have passed without it settling. */
export function withTimeout<T>(p: Promise<T>, ms: number, message: string): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  return Promise.race([p, new Promise<never>((_, reject) => { timer = setTimeout(() => reject(new Error(message)), ms); })])
    .finally(() => clearTimeout(timer));
}
