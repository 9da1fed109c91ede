import { Observable, type OperatorFunction } from 'rxjs';

/**
 * Each value to an array of values, emitted at once and in order: what `concatMap` to an array
 * does, without an inner subscription per value (per scan, that was a tenth of a replay's
 * garbage). A throwing `project` errors the stream, as in any operator.
 */
export function syncFlatMap<T, R>(project: (value: T) => readonly R[]): OperatorFunction<T, R> {
  return (source) => new Observable<R>((subscriber) => source.subscribe({
    next(value) {
      let out: readonly R[];
      try {
        out = project(value);
      } catch (err) {
        subscriber.error(err);
        return;
      }
      for (let i = 0; i < out.length && !subscriber.closed; i++) subscriber.next(out[i]);
    },
    error: (err) => subscriber.error(err),
    complete: () => subscriber.complete(),
  }));
}
