/**
 * One fit for pane and cells: the model the pane fits (inline or in its worker) is stored in the
 * shared fit cache under the key the ODDS formulas compute over the same ranges, so the formulas the
 * pane writes, and any ODDS.FIT / ODDS.PROB over those ranges, use it without training again and show
 * the pane's numbers exactly.
 *
 * The worker is played in-process by a stand-in Worker class that runs the worker's own protocol
 * function (answerFitRequest) on a structured clone of each message, as postMessage does, so the
 * model that reaches the pane has really been through the clone.
 */
import * as engineModel from "../../../src/engine/model";
import { fitCell } from "../../../src/functions/fitCell";
import { fitKey, modelCache, modelCacheKey, readModelOptions } from "../../../src/shared/fitService";
import { probCell } from "../../../src/functions/predictCells";
import { loadDemo } from "../../../src/preview/demo";
import { evaluateFormula } from "../../../src/preview/formulas";
import { parseAddress, splitSheet } from "../../../src/taskpane/a1";
import { answerFitRequest, type FitJob, type WorkerReply, type WorkerRequest } from "../../../src/taskpane/fitRunner";
import { MemoryPort, MemoryWorkbook } from "../../../src/taskpane/memoryPort";
import { modelInputs } from "../../../src/taskpane/modelSetup";
import { PaneController } from "../../../src/taskpane/paneController";
import type { CellValue } from "../../../src/engine/types";

/** A Worker stand-in: each message crosses as a structured clone, asynchronously, both ways. */
class InProcessWorker {
  onmessage: ((e: { data: WorkerReply }) => void) | null = null;
  onerror: ((e: { preventDefault(): void }) => void) | null = null;
  private ended = false;
  constructor(readonly url: string) {}
  postMessage(request: WorkerRequest) {
    const copy = structuredClone(request);
    setTimeout(() =>
      answerFitRequest(copy, (reply) => {
        const back = structuredClone(reply);
        setTimeout(() => {
          if (!this.ended) this.onmessage?.({ data: back });
        }, 0);
      }),
    );
  }
  terminate() {
    this.ended = true;
  }
}

/** Values of a reference such as "Crates!$G$1:$G$241" in the workbook, as Excel passes them. */
function rangeValues(workbook: MemoryWorkbook, reference: string): CellValue[][] {
  const { sheet, address } = splitSheet(reference);
  return workbook.read(sheet!, parseAddress(address.replace(/\$/g, ""))!);
}

/** The labels and predictors references of the PROB formula the pane wrote. */
function formulaRanges(controller: PaneController): { labels: string; predictors: string; options: string } {
  const formula = controller.layout!.anchors.find((a) => a.what === "probabilities")!.formula;
  const m = /^=ODDS\.PROB\(([^,]+), ([^,]+), , "(.*)"\)$/.exec(formula);
  if (!m) throw new Error(`unexpected formula ${formula}`);
  return { labels: m[1], predictors: m[2], options: m[3] };
}

async function paneOnDemo(runner: "inline" | "worker") {
  const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
  const sheet = loadDemo(workbook);
  workbook.select(sheet, { top: 3, left: 2, bottom: 3, right: 2 });
  const controller = new PaneController({ port: new MemoryPort(workbook), runner, workerUrl: "fitworker.js", refreshDelayMs: 0 });
  await controller.useSelection();
  // The demo's Check sheet computes its formulas on loading (a fit over the same ranges): start from
  // an empty cache and count trainings from here on.
  modelCache().clear();
  train?.mockClear();
  return { workbook, controller };
}

let train: jest.SpyInstance;

beforeEach(() => {
  modelCache().clear();
  train = jest.spyOn(engineModel, "trainModel");
});

afterEach(() => {
  train.mockRestore();
  delete (globalThis as Record<string, unknown>).Worker;
});

describe.each(["inline", "worker"] as const)("a model fitted by the pane (%s) is the one the cells show", (runner) => {
  beforeEach(() => {
    if (runner === "worker") (globalThis as Record<string, unknown>).Worker = InProcessWorker;
  });

  test("the pane trains once; its formulas and further FIT/PROB calls over the same ranges train no more", async () => {
    const { workbook, controller } = await paneOnDemo(runner);
    await controller.fit();
    expect(controller.status.phase).toBe("done");
    expect(controller.outcome!.runner).toBe(runner);
    // One training in all: the pane's (the formulas it wrote were computed on writing).
    expect(train).toHaveBeenCalledTimes(1);
    expect(workbook.value("Oddsmith results", 1, 1)).toBe("P(yes)");

    const ranges = formulaRanges(controller);
    const labels = rangeValues(workbook, ranges.labels);
    const predictors = rangeValues(workbook, ranges.predictors);
    const fitted = fitCell(labels, predictors, [[ranges.options]]);
    const probabilities = probCell(labels, predictors, null, [[ranges.options]]);
    expect(train).toHaveBeenCalledTimes(1);

    // Same numbers, exactly: the cells use the pane's model object.
    const model = controller.outcome!.model;
    const estimates = fitted.slice(1, 1 + model.fit.terms.length).map((r) => r[2]);
    expect(estimates).toEqual(Array.from(model.fit.coefficients[0]));
    const p = controller.outcome!.scores.prediction.probabilities[1];
    expect(probabilities.slice(1).map((r) => r[0])).toEqual(Array.from(p));
    // ... and the sheet shows them.
    for (const i of [0, 100, 239]) expect(workbook.value("Oddsmith results", i + 2, 1)).toBe(p[i]);
  });

  test("the cache holds the pane's model under the key the formulas compute", async () => {
    const { workbook, controller } = await paneOnDemo(runner);
    await controller.fit();
    const ranges = formulaRanges(controller);
    const formulaOptions = readModelOptions("ODDS.PROB", [[ranges.options]]);
    const key = modelCacheKey(rangeValues(workbook, ranges.labels), rangeValues(workbook, ranges.predictors), formulaOptions.model);
    const inputs = modelInputs(controller.data!, controller.choice!, 2);
    expect(fitKey({ labels: inputs.labels, predictors: inputs.predictors, options: inputs.options })).toBe(key);
    expect(modelCache().get(key)).toBe(controller.outcome!.model);
  });
});

describe("the trained model crosses to and from the worker whole", () => {
  test("a structured clone of a trained model equals it (types kept) and scores the same", () => {
    const inputs = { labels: [["y"], ["a"], ["b"], ["a"], ["b"], ["b"], ["a"]], predictors: [["x", "g"], [1, "u"], [2, "v"], [3, "u"], [4, "v"], [2.5, "u"], [3.5, "v"]] };
    const options = readModelOptions("test", null);
    const model = engineModel.trainModel(inputs.labels, inputs.predictors, options.model);
    const copy = structuredClone(model);
    // toStrictEqual also compares types: a class instance or typed array turned plain would differ.
    expect(copy).toStrictEqual(model);
    expect(engineModel.scoreRows(copy, [["x", "g"], [2.2, "v"]])).toStrictEqual(engineModel.scoreRows(model, [["x", "g"], [2.2, "v"]]));
  });

  test("a worker job whose fit fails stores nothing in the cache", async () => {
    (globalThis as Record<string, unknown>).Worker = InProcessWorker;
    const options = readModelOptions("test", null);
    const job: FitJob = { labels: [["y"], ["a"]], predictors: [["x"], [1]], options, threshold: 0.5 };
    const replies: WorkerReply[] = [];
    answerFitRequest({ id: 1, job }, (r) => replies.push(r));
    expect(replies).toHaveLength(1);
    expect("failure" in replies[0]).toBe(true);
    expect(modelCache().get(fitKey(job))).toBeUndefined();
  });
});
