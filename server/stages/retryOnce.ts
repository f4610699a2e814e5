// A retry as one operator: the source is subscribed to again once when it fails (a compute worker
// that died is replaced by the pool, so the second try runs on a fresh worker); a second failure
// becomes a value through `onFailure`, so the stream goes on with the next frame.
//
//   defer(() => pool.analyse(job)).pipe(retryOnce((e) => failedReply(e)))

import type { OperatorFunction } from 'rxjs';
import { catchError, of, retry } from 'rxjs';

export function retryOnce<T, F = T>(onFailure: (error: unknown) => F): OperatorFunction<T, T | F> {
  return (source) => source.pipe(retry(1), catchError((e: unknown) => of(onFailure(e))));
}
