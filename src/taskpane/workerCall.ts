/**
 * One request to a fresh Web Worker, as a promise: the worker is started for the request and ended
 * when the answer comes, when it fails, or at once when the AbortSignal fires (Cancel). Replies carry
 * the request's id; others are ignored. Used by the background fit and the background
 * cross-validation.
 */
export interface WorkerCallErrors {
  /** The error a cancelled call rejects with. */
  cancelled: () => Error;
  /** The error when the worker script itself fails (no reply). */
  crashed: () => Error;
}

/**
 * Post `request` to a new worker from `url`. `handle` sees each reply of this request: it returns
 * null to wait for more (a progress report), `{ done }` to resolve or `{ failed }` to reject.
 * `onStart` runs just before the request is posted (not when the signal had already fired).
 */
export function callWorker<Req extends { id: number }, Reply extends { id: number }, Out>(
  url: string,
  request: Req,
  signal: AbortSignal,
  handle: (reply: Reply) => { done: Out } | { failed: Error } | null,
  errors: WorkerCallErrors,
  onStart?: () => void,
): Promise<Out> {
  return new Promise((resolve, reject) => {
    if (signal.aborted) {
      reject(errors.cancelled());
      return;
    }
    const worker = new Worker(url);
    const end = () => {
      worker.terminate();
      signal.removeEventListener("abort", onAbort);
    };
    const onAbort = () => {
      end();
      reject(errors.cancelled());
    };
    signal.addEventListener("abort", onAbort);
    worker.onmessage = (event: MessageEvent<Reply>) => {
      if (event.data.id !== request.id) return;
      const out = handle(event.data);
      if (out === null) return;
      end();
      if ("done" in out) resolve(out.done);
      else reject(out.failed);
    };
    worker.onerror = (event) => {
      event.preventDefault();
      end();
      reject(errors.crashed());
    };
    onStart?.();
    worker.postMessage(request);
  });
}
