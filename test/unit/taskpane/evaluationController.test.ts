/**
 * The evaluation section's logic against the in-memory workbook: the ROC, AUC and counts of the
 * pane's fit equal the engine's on the same rows; moving the threshold moves the boundary review
 * (its list equals the engine's borderline rows at the new threshold); the cross-validation runners
 * report progress, can be cancelled between steps, and carry failures as catalogue messages.
 */
import { MemoryPort, MemoryWorkbook } from "../../../src/taskpane/memoryPort";
import { evaluateFormula } from "../../../src/preview/formulas";
import { DEMO_SHEETS, loadDemo } from "../../../src/preview/demo";
import { PaneController } from "../../../src/taskpane/paneController";
import { EvaluationController, logSpacedPenalties } from "../../../src/taskpane/evaluationController";
import {
  answerCvRequest,
  CvCancelled,
  InlineEvaluationRunner,
  WorkerEvaluationRunner,
  type CvCompute,
  type CvReply,
  type CvResult,
} from "../../../src/taskpane/evaluationRunner";
import { nearBoundaryRows } from "../../../src/engine/boundary";
import { scoreRows, trainModel } from "../../../src/engine/model";
import { rocAuc } from "../../../src/engine/metrics/rocAuc";
import { confusionCounts } from "../../../src/engine/metrics/confusionCounts";
import { calibrationTable } from "../../../src/engine/metrics/calibrationTable";
import { problem } from "../../../src/shared/messages";
import { chooseThreshold } from "../../../src/engine/evaluation/chooseThreshold";
import { thresholdChooser } from "../../../src/taskpane/evaluationCompute";
import { readModelOptions } from "../../../src/shared/fitService";

/** A stepped computation for the runner tests: `steps` progress reports, then a fixed path. */
function countingCompute(steps: number, seen: number[] = []): CvCompute {
  return function* (job) {
    for (let i = 1; i <= steps; i++) {
      seen.push(i);
      yield { done: i, total: steps };
    }
    const result: CvResult = {
      entries: job.penalties.map((penalty, i) => ({ penalty, mean: 0.6 - 0.01 * i, standardError: 0.01 })),
      best: job.penalties.length - 1,
      oneSe: job.penalties.length - 2,
      folds: job.folds,
      rows: 240,
      outOfFold: null,
    };
    return result;
  };
}

async function setUp(compute: CvCompute = countingCompute(3)) {
  const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
  const sheet = loadDemo(workbook);
  workbook.select(sheet, { top: 3, left: 2, bottom: 3, right: 2 });
  const pane = new PaneController({ port: new MemoryPort(workbook), runner: "inline", refreshDelayMs: 0 });
  await pane.useSelection();
  const evaluation = new EvaluationController(pane, new InlineEvaluationRunner(compute));
  return { pane, evaluation };
}

function engine(threshold = 0.5) {
  const values = DEMO_SHEETS[0].values.slice(1);
  const options = readModelOptions("test", [[`penalty=0; level=0.95; threshold=${threshold}`]]);
  const model = trainModel(values.map((r) => [r[6]]), values.map((r) => r.slice(2, 6)), options.model);
  const p = scoreRows(model, null, { threshold }).prediction.probabilities[1];
  const labels = Float64Array.from(values, (r) => (r[6] === "yes" ? 1 : 0));
  return { model, p, labels };
}

describe("evaluation of the pane's fit", () => {
  test("before a fit there is nothing to evaluate, and the view is told why", async () => {
    const { evaluation } = await setUp();
    expect(evaluation.evaluation.kind).toBe("unavailable");
    expect((evaluation.evaluation as { message: string }).message).toMatch(/^Fit a model/);
  });

  test("ROC, AUC with DeLong interval and counts equal the engine's on the 240 fitted rows", async () => {
    const { pane, evaluation } = await setUp();
    await pane.fit(false);
    const ev = evaluation.evaluation;
    if (ev.kind !== "binary") throw new Error(ev.message);
    const { p, labels } = engine();
    expect(ev.rows).toBe(240);
    expect(ev.positiveClass).toBe("yes");
    expect(Array.from(ev.labels)).toEqual(Array.from(labels));
    expect(Array.from(ev.probabilities)).toEqual(Array.from(p));
    const auc = rocAuc(labels, p, { level: 0.95 });
    expect(ev.auc.auc).toBe(auc.auc);
    expect([ev.auc.lower, ev.auc.upper]).toEqual([auc.lower, auc.upper]);
    expect(ev.counts).toEqual(confusionCounts(labels, p, { threshold: 0.5 }));
    expect(ev.calibration.groups).toHaveLength(10);
    // Unpenalized maximum likelihood on its own rows: slope 1 and intercept 0 (score equations).
    expect(ev.slope.slope.estimate).toBeCloseTo(1, 6);
    expect(ev.slope.intercept.estimate).toBeCloseTo(0, 6);
  });

  test("moving the threshold moves the boundary review: its list is the engine's at the new threshold", async () => {
    const { pane, evaluation } = await setUp();
    await pane.fit(false);
    await evaluation.chooseThreshold({ kind: "direct", value: 0.3 });
    expect(pane.reviewSettings.threshold).toBe(0.3);
    expect(pane.choice!.threshold).toBe(0.3);
    const { model, p, labels } = engine(0.3);
    const expected = nearBoundaryRows(scoreRows(model, null, { threshold: 0.3 }).prediction, { threshold: 0.3, band: 0.1, undecided: true, limit: 200 });
    expect(pane.review!.lines.map((l) => l.dataRow)).toEqual(expected.rows.map((r) => r.row));
    expect(pane.review!.summary).toContain("of the threshold 0.30.");
    const ev = evaluation.evaluation;
    if (ev.kind !== "binary") throw new Error(ev.message);
    expect(ev.threshold).toBe(0.3);
    expect(ev.counts).toEqual(confusionCounts(labels, p, { threshold: 0.3 }));
  });

  test("a threshold move keeps the curve, AUC and calibration (same probabilities) and retakes the counts; a refit recomputes all", async () => {
    const { pane, evaluation } = await setUp();
    await pane.fit(false);
    const first = evaluation.evaluation;
    if (first.kind !== "binary") throw new Error(first.message);
    await evaluation.moveThreshold(0.35);
    const moved = evaluation.evaluation;
    if (moved.kind !== "binary") throw new Error(moved.message);
    expect(moved.curve).toBe(first.curve);
    expect(moved.auc).toBe(first.auc);
    expect(moved.slope).toBe(first.slope);
    expect(moved.counts).toEqual(confusionCounts(first.labels, first.probabilities, { threshold: 0.35 }));
    pane.setChoice({ penalty: 1 });
    await pane.fit(false);
    const refit = evaluation.evaluation;
    if (refit.kind !== "binary") throw new Error(refit.message);
    expect(refit.curve).not.toBe(first.curve);
    expect(refit.auc.auc).not.toBe(first.auc.auc);
  });

  test("a threshold outside (0, 1) is refused with a catalogue message and changes nothing", async () => {
    const { pane, evaluation } = await setUp();
    await pane.fit(false);
    await evaluation.moveThreshold(1.2);
    expect(pane.reviewSettings.threshold).toBe(0.5);
    expect(evaluation.status.phase).toBe("failed");
    expect(evaluation.status.message).toContain("threshold");
  });

  test("a threshold chooser's answer becomes the review's threshold, with its note", async () => {
    const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
    const sheet = loadDemo(workbook);
    workbook.select(sheet, { top: 3, left: 2, bottom: 3, right: 2 });
    const pane = new PaneController({ port: new MemoryPort(workbook), runner: "inline", refreshDelayMs: 0 });
    await pane.useSelection();
    const asked: unknown[] = [];
    const evaluation = new EvaluationController(pane, new InlineEvaluationRunner(countingCompute(1)), (labels, probabilities, kind, value) => {
      asked.push([labels.length, probabilities.length, kind, value]);
      return { threshold: 0.42, note: "note from the chooser" };
    });
    await pane.fit(false);
    await evaluation.chooseThreshold({ kind: "cost", value: 2 });
    expect(asked).toEqual([[240, 240, "cost", 2]]);
    expect(pane.reviewSettings.threshold).toBe(0.42);
    expect(evaluation.chooserNote).toBe("note from the chooser");
  });

  test("the built chooser (the engine's chooseThreshold) moves the review to the engine's threshold for each goal", async () => {
    const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
    const sheet = loadDemo(workbook);
    workbook.select(sheet, { top: 3, left: 2, bottom: 3, right: 2 });
    const pane = new PaneController({ port: new MemoryPort(workbook), runner: "inline", refreshDelayMs: 0 });
    await pane.useSelection();
    expect(thresholdChooser).not.toBeNull();
    const evaluation = new EvaluationController(pane, new InlineEvaluationRunner(countingCompute(1)), thresholdChooser);
    expect(evaluation.canChooseByGoal).toBe(true);
    await pane.fit(false);
    const { p, labels } = engine();
    const cases = [
      { kind: "cost", value: 3, rule: { rule: "cost", costRatio: 3 } },
      { kind: "sensitivity", value: 0.9, rule: { rule: "sensitivity", target: 0.9 } },
      { kind: "budget", value: 25, rule: { rule: "budget", budget: 25 } },
    ] as const;
    for (const c of cases) {
      const expected = chooseThreshold(labels, p, c.rule);
      await evaluation.chooseThreshold({ kind: c.kind, value: c.value });
      // The review uses the shortest decimal that flags exactly the engine's rows.
      const used = pane.reviewSettings.threshold;
      const flagged = p.filter((q) => q >= used).length;
      expect(flagged).toBe(p.filter((q) => q >= expected.threshold).length);
      expect(evaluation.chooserNote).toContain(`${expected.flaggedRows} rows flagged`);
    }
    // The budget goal flags at most the budget (ties stay together).
    expect(chooseThreshold(labels, p, { rule: "budget", budget: 25 }).flaggedRows).toBeLessThanOrEqual(25);
  });

  test("split by a column: one calibration table per value, each the engine's table on that value's rows", async () => {
    const { pane, evaluation } = await setUp();
    await pane.fit(false);
    const block = pane.data!.columns.findIndex((c) => c.name === "block");
    expect(evaluation.splitCandidates()).toContain(block);
    expect(evaluation.splitCandidates()).not.toContain(pane.choice!.label);
    evaluation.setSplit(block);
    const ev = evaluation.evaluation;
    if (ev.kind !== "binary") throw new Error(ev.message);
    const values = DEMO_SHEETS[0].values.slice(1);
    const names = [...new Set(values.map((r) => String(r[1])))].sort();
    expect(ev.split!.series.map((x) => x.name)).toEqual(names);
    const { p, labels } = engine();
    for (const x of ev.split!.series) {
      const rows = values.map((r, i) => (r[1] === x.name ? i : -1)).filter((i) => i >= 0);
      expect(x.rows).toBe(rows.length);
      const expected = calibrationTable(Float64Array.from(rows, (i) => labels[i]), Float64Array.from(rows, (i) => p[i]), { groups: 5 });
      expect(x.table.groups).toEqual(expected.groups);
    }
    expect(ev.split!.tooSmall).toEqual([]);
    evaluation.setSplit(null);
    expect((evaluation.evaluation as { split: unknown }).split).toBeNull();
  });

  test("a multi-class label gets a plain message instead of ROC and calibration", async () => {
    const { pane, evaluation } = await setUp();
    const grade = pane.data!.columns.findIndex((c) => c.name === "grade");
    pane.setChoice({ label: grade });
    await pane.fit(false);
    expect(evaluation.evaluation.kind).toBe("unavailable");
    expect((evaluation.evaluation as { message: string }).message).toMatch(/for two classes/);
  });
});

describe("cross-validation runs", () => {
  test("log-spaced penalties: ends included, evenly spaced in log10, 4 significant digits", () => {
    expect(logSpacedPenalties(0.001, 100, 6)).toEqual([0.001, 0.01, 0.1, 1, 10, 100]);
    expect(logSpacedPenalties(1, 100, 3)).toEqual([1, 10, 100]);
    expect(logSpacedPenalties(0.01, 1, 4)).toEqual([0.01, 0.04642, 0.2154, 1]);
    expect(() => logSpacedPenalties(0, 1, 3)).toThrow(/penalty range/);
  });

  test("progress is reported step by step and the path lands with its marks", async () => {
    const { pane, evaluation } = await setUp(countingCompute(4));
    const progress: (number | null)[] = [];
    evaluation.subscribe((c) => {
      if (c === "status" && evaluation.status.busy) progress.push(evaluation.status.progress);
    });
    await evaluation.runPath({ folds: 5, seed: 1, penalties: [0.01, 0.1, 1] });
    expect(progress).toEqual([0, 0.25, 0.5, 0.75, 1]);
    expect(evaluation.status.phase).toBe("done");
    expect(evaluation.path!.entries.map((e) => e.penalty)).toEqual([0.01, 0.1, 1]);
    expect(evaluation.status.message).toContain("lowest out-of-fold log-loss at penalty 1; the one-standard-error choice is 0.1");
    evaluation.adoptPathPenalty();
    expect(pane.choice!.penalty).toBe(0.1);
  });

  test("cancel stops between steps: no further step runs and the previous path is kept", async () => {
    const seen: number[] = [];
    const { evaluation } = await setUp(countingCompute(50, seen));
    const run = evaluation.runPath({ folds: 5, seed: 1, penalties: [0.1, 1] });
    await new Promise((r) => setTimeout(r, 15));
    evaluation.cancelPath();
    await run;
    expect(evaluation.status.phase).toBe("cancelled");
    expect(evaluation.path).toBeNull();
    const stoppedAt = seen.length;
    expect(stoppedAt).toBeLessThan(50);
    await new Promise((r) => setTimeout(r, 20));
    expect(seen.length).toBe(stoppedAt);
  });

  test("the worker's protocol posts each step, then the result; a catalogue failure keeps its message", () => {
    const replies: CvReply[] = [];
    const job = { labels: [], predictors: [], options: {}, folds: 3, seed: 1, penalties: [1, 2] };
    answerCvRequest({ id: 7, job }, countingCompute(2), (r) => replies.push(r));
    expect(replies.map((r) => Object.keys(r).filter((k) => k !== "id")[0])).toEqual(["progress", "progress", "result"]);
    expect(replies.every((r) => r.id === 7)).toBe(true);
    const failing: CvCompute = function* () {
      throw problem("BAD_OPTION_VALUE", { name: "folds", value: 1, expected: "Use 2 or more folds." });
    };
    const out: CvReply[] = [];
    answerCvRequest({ id: 8, job }, failing, (r) => out.push(r));
    expect(out).toHaveLength(1);
    expect("failure" in out[0] && out[0].failure.message).toContain("Use 2 or more folds.");
  });

  test("the worker runner relays each progress report and the result, and Cancel ends the worker at once", async () => {
    const workers: { terminated: boolean }[] = [];
    class StepWorker {
      onmessage: ((e: { data: CvReply }) => void) | null = null;
      onerror: unknown = null;
      terminated = false;
      constructor() {
        workers.push(this);
      }
      postMessage(request: { id: number; job: never }) {
        // Each reply arrives as its own message, as from a real worker.
        answerCvRequest(request, countingCompute(3), (reply) => setTimeout(() => !this.terminated && this.onmessage?.({ data: reply }), 1));
      }
      terminate() {
        this.terminated = true;
      }
    }
    (globalThis as Record<string, unknown>).Worker = StepWorker;
    try {
      const job = { labels: [], predictors: [], options: {}, folds: 3, seed: 1, penalties: [0.1, 1] };
      const seen: number[] = [];
      const out = await new WorkerEvaluationRunner("evalworker.js").run(job, (p) => seen.push(p.done), new AbortController().signal);
      expect(seen).toEqual([1, 2, 3]);
      expect(out.runner).toBe("worker");
      expect(out.entries.map((e) => e.penalty)).toEqual([0.1, 1]);
      expect(workers[0].terminated).toBe(true);
      const abort = new AbortController();
      const run = new WorkerEvaluationRunner("evalworker.js").run(job, () => abort.abort(), abort.signal);
      await expect(run).rejects.toBeInstanceOf(CvCancelled);
      expect(workers[1].terminated).toBe(true);
    } finally {
      delete (globalThis as Record<string, unknown>).Worker;
    }
  });
});
