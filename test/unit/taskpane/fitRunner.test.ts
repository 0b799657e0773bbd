/**
 * Fit runners: which one is chosen, cancel semantics, and the worker message protocol (driven with a
 * stand-in Worker class here; the real worker runs in the browser tests).
 */
import { readModelOptions } from "../../../src/shared/fitService";
import { fittedModel } from "../../../src/functions/modelCell";
import {
  chooseRunner,
  FitCancelled,
  FitFailed,
  INLINE_CELL_LIMIT,
  InlineFitRunner,
  WorkerFitRunner,
  type FitJob,
  type WorkerReply,
  type WorkerRequest,
} from "../../../src/taskpane/fitRunner";

/**
 * Time allowed for the payload-limit test: hashing 6 million characters for the cache key takes about
 * 5 s under jest's module sandbox (0.1 s in plain Node) and the fit about 1 s; the machine is shared.
 */
const LARGE_INPUT_TIMEOUT_MS = 60_000;

function job(rows = 20): FitJob {
  const labels = [["y"], ...Array.from({ length: rows }, (_, i) => [i % 3 === 0 ? "a" : "b"])];
  const predictors = [["x"], ...Array.from({ length: rows }, (_, i) => [(i * 7) % 10])];
  return { labels, predictors, options: readModelOptions("test", null), threshold: 0.5 };
}

/** A stand-in Worker: records posts and terminations; the test plays the worker's replies. */
class FakeWorker {
  static last: FakeWorker | null = null;
  onmessage: ((e: MessageEvent<WorkerReply>) => void) | null = null;
  onerror: ((e: { preventDefault(): void }) => void) | null = null;
  posted: WorkerRequest[] = [];
  terminated = false;
  constructor(readonly url: string) {
    FakeWorker.last = this;
  }
  postMessage(m: WorkerRequest) {
    this.posted.push(m);
  }
  terminate() {
    this.terminated = true;
  }
  reply(r: WorkerReply) {
    this.onmessage?.({ data: r } as MessageEvent<WorkerReply>);
  }
}

describe("choosing a runner", () => {
  afterEach(() => {
    delete (globalThis as Record<string, unknown>).Worker;
  });

  test("without Web Workers the fit always runs inline", () => {
    expect(chooseRunner(job(), "fitworker.js", "worker").kind).toBe("inline");
  });

  test(`with workers, inputs above ${INLINE_CELL_LIMIT} cells go to the worker, smaller ones stay inline`, () => {
    (globalThis as Record<string, unknown>).Worker = FakeWorker;
    expect(chooseRunner(job(20), "fitworker.js").kind).toBe("inline");
    expect(chooseRunner(job(INLINE_CELL_LIMIT), "fitworker.js").kind).toBe("worker");
    expect(chooseRunner(job(20), "fitworker.js", "worker").kind).toBe("worker");
    expect(chooseRunner(job(INLINE_CELL_LIMIT), "fitworker.js", "inline").kind).toBe("inline");
    expect(chooseRunner(job(INLINE_CELL_LIMIT), null).kind).toBe("inline");
  });
});

describe("inline runner", () => {
  test("fits and scores, reporting the phases in order", async () => {
    const phases: string[] = [];
    const out = await new InlineFitRunner().run(job(), (p) => phases.push(p), new AbortController().signal);
    expect(phases).toEqual(["fitting", "scoring", "done"]);
    expect(out.scores.rows).toBe(20);
    expect(out.runner).toBe("inline");
  });

  test("the pane fits tables beyond a cell call's payload limit (it reads them in chunks itself)", async () => {
    // 60,000 labels of 100 characters: about 6.2 MB as a call's JSON, above the 5 MB a formula may carry.
    const rows = 60_000;
    const names = ["a".repeat(100), "b".repeat(100)];
    const big: FitJob = {
      labels: [["y"], ...Array.from({ length: rows }, (_, i) => [names[(i * 7) % 11 < 5 ? 0 : 1]])],
      predictors: [["x"], ...Array.from({ length: rows }, (_, i) => [((i * 7) % 11) + (i % 3)])],
      options: readModelOptions("test", null),
      threshold: 0.5,
    };
    expect(() => fittedModel(big.labels, big.predictors, big.options, 0)).toThrow(expect.objectContaining({ code: "RANGE_TOO_LARGE" }));
    const out = await new InlineFitRunner().run(big, () => undefined, new AbortController().signal);
    expect(out.model.fit.rowsUsed).toBe(rows);
  }, LARGE_INPUT_TIMEOUT_MS);

  test("a run cancelled before it starts fitting rejects with FitCancelled", async () => {
    const abort = new AbortController();
    const run = new InlineFitRunner().run(job(), () => undefined, abort.signal);
    abort.abort();
    await expect(run).rejects.toBeInstanceOf(FitCancelled);
  });
});

describe("worker runner", () => {
  beforeEach(() => {
    (globalThis as Record<string, unknown>).Worker = FakeWorker;
  });
  afterEach(() => {
    delete (globalThis as Record<string, unknown>).Worker;
  });

  test("posts the job, passes phases on, resolves with the outcome and ends the worker", async () => {
    const phases: string[] = [];
    const run = new WorkerFitRunner("fitworker.js").run(job(), (p) => phases.push(p), new AbortController().signal);
    const w = FakeWorker.last!;
    expect(w.url).toBe("fitworker.js");
    const id = w.posted[0].id;
    w.reply({ id: id + 99, phase: "scoring" }); // another run's message: ignored
    w.reply({ id, phase: "scoring" });
    const fake = { model: {} as never, scores: { rows: 3 } as never, elapsedMs: 12 };
    w.reply({ id, outcome: fake });
    const out = await run;
    expect(phases).toEqual(["fitting", "scoring"]);
    expect(out.elapsedMs).toBe(12);
    expect(out.runner).toBe("worker");
    expect(w.terminated).toBe(true);
  });

  test("cancel ends the worker at once and rejects with FitCancelled", async () => {
    const abort = new AbortController();
    const run = new WorkerFitRunner("fitworker.js").run(job(), () => undefined, abort.signal);
    abort.abort();
    await expect(run).rejects.toBeInstanceOf(FitCancelled);
    expect(FakeWorker.last!.terminated).toBe(true);
  });

  test("a failure reported by the worker keeps its catalogue message", async () => {
    const run = new WorkerFitRunner("fitworker.js").run(job(), () => undefined, new AbortController().signal);
    const w = FakeWorker.last!;
    w.reply({ id: w.posted[0].id, failure: { name: "OddsmithError", message: "Only 2 usable rows for 3 parameters.", code: "TOO_FEW_ROWS" } });
    await expect(run).rejects.toEqual(new FitFailed("Only 2 usable rows for 3 parameters.", "TOO_FEW_ROWS"));
  });

  test("a worker that crashes gives a plain message, not its internals", async () => {
    const run = new WorkerFitRunner("fitworker.js").run(job(), () => undefined, new AbortController().signal);
    FakeWorker.last!.onerror!({ preventDefault() {} });
    await expect(run).rejects.toThrow("The background fit stopped unexpectedly.");
  });
});
