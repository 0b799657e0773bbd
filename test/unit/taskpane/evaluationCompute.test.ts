/**
 * The pane's cross-validation path (evaluationCompute.pathCompute) is the engine's: on the demo
 * table it gives ODDS.FOLDS's path on the same cells, options, folds and seed (means, SEs, the
 * lowest and one-SE marks) and ODDS.FOLDS's out-of-fold probabilities at the one-SE penalty; it
 * reports progress fit by fit and stops between fits when cancelled.
 */
import { MemoryPort, MemoryWorkbook } from "../../../src/taskpane/memoryPort";
import { evaluateFormula } from "../../../src/preview/formulas";
import { loadDemo } from "../../../src/preview/demo";
import { PaneController } from "../../../src/taskpane/paneController";
import { EvaluationController } from "../../../src/taskpane/evaluationController";
import { CvCancelled, InlineEvaluationRunner, type CvJob, type CvResult } from "../../../src/taskpane/evaluationRunner";
import { pathCompute } from "../../../src/taskpane/evaluationCompute";
import { modelInputs } from "../../../src/taskpane/modelSetup";
import { CELL_FUNCTIONS } from "../../../src/functions/registry";
import type { CellValue } from "../../../src/engine";

const FOLDS = CELL_FUNCTIONS.find((f) => f.name === "FOLDS")!;
const PENALTIES = [0.01, 0.1, 1, 10, 100];

async function paneJob(): Promise<{ job: CvJob; optionsText: string; labels: CellValue[][]; predictors: CellValue[][] }> {
  const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
  const sheet = loadDemo(workbook);
  workbook.select(sheet, { top: 3, left: 2, bottom: 3, right: 2 });
  const pane = new PaneController({ port: new MemoryPort(workbook), runner: "inline", refreshDelayMs: 0 });
  await pane.useSelection();
  const evaluation = new EvaluationController(pane, new InlineEvaluationRunner(pathCompute!));
  const job = evaluation.pathJob({ folds: 5, seed: 7, penalties: PENALTIES });
  const inputs = modelInputs(pane.data!, pane.choice!, Math.max(2, pane.labelClasses().length));
  return { job, optionsText: inputs.optionsText, labels: inputs.labels, predictors: inputs.predictors };
}

function runToEnd(job: CvJob): { result: CvResult; progress: { done: number; total: number }[] } {
  const steps = pathCompute!(job);
  const progress: { done: number; total: number }[] = [];
  for (;;) {
    const s = steps.next();
    if (s.done) return { result: s.value, progress };
    progress.push(s.value);
  }
}

/** The cell's options for the same model: the pane's options text without the fit-only level. */
function cellOptions(optionsText: string, extra: string): CellValue[][] {
  const kept = optionsText.split(";").map((s) => s.trim()).filter((s) => s && !s.startsWith("level=") && !s.startsWith("penalty="));
  return [[[...kept, "folds=5", "seed=7", `penalties=${PENALTIES.join(" ")}`, extra].join("; ")]];
}

describe("the pane's cross-validation path", () => {
  test("equals ODDS.FOLDS's path and out-of-fold probabilities on the demo table, with progress fit by fit", async () => {
    const { job, optionsText, labels, predictors } = await paneJob();
    expect(pathCompute).not.toBeNull();
    const { result, progress } = runToEnd(job);

    const path = FOLDS.adapter(labels, predictors, cellOptions(optionsText, "show=path"));
    const header = path[0] as string[];
    const col = (name: string) => header.indexOf(name);
    const rows = path.slice(1, 1 + PENALTIES.length);
    expect(rows.map((r) => r[col("penalty")])).toEqual(PENALTIES);
    expect(result.entries.map((e) => e.penalty)).toEqual(PENALTIES);
    result.entries.forEach((e, k) => {
      expect(Math.abs(e.mean - (rows[k][col("mean log-loss")] as number))).toBeLessThan(1e-12);
      expect(Math.abs(e.standardError - (rows[k][col("SE")] as number))).toBeLessThan(1e-12);
    });
    const marked = (mark: string) => rows.findIndex((r) => String(r[col("choice")]).split(/,\s*/).includes(mark));
    expect(result.best).toBe(marked("lowest"));
    expect(result.oneSe).toBe(marked("one-SE"));
    expect(result.folds).toBe(5);

    // Out-of-fold probabilities at the one-SE penalty, one per data row, as the cell spills them.
    const oofCells = FOLDS.adapter(labels, predictors, cellOptions(optionsText, "show=out-of-fold"));
    const hasHeader = typeof oofCells[0][0] === "string";
    const cellValues = oofCells.slice(hasHeader ? 1 : 0).map((r) => r[0]);
    expect(result.outOfFold).not.toBeNull();
    expect(result.outOfFold!.length).toBe(cellValues.length);
    let worst = 0;
    let scored = 0;
    cellValues.forEach((v, i) => {
      if (typeof v === "number") {
        worst = Math.max(worst, Math.abs(v - result.outOfFold![i]));
        scored++;
      } else expect(Number.isNaN(result.outOfFold![i])).toBe(true);
    });
    expect(scored).toBe(result.rows);
    expect(worst).toBeLessThan(1e-12);

    // Progress: one report per fit (plus the set-up), counting up to the total.
    const total = progress[0].total;
    expect(progress.map((p) => p.done)).toEqual(Array.from({ length: progress.length }, (_, i) => i + 1));
    expect(progress[progress.length - 1].done).toBeLessThanOrEqual(total);
    expect(total).toBeGreaterThanOrEqual(5 * PENALTIES.length);
  });

  test("the inline runner stops between fits when cancelled", async () => {
    const { job } = await paneJob();
    const abort = new AbortController();
    let reports = 0;
    const run = new InlineEvaluationRunner(pathCompute!).run(
      job,
      () => {
        reports++;
        if (reports === 3) abort.abort();
      },
      abort.signal,
    );
    await expect(run).rejects.toBeInstanceOf(CvCancelled);
    expect(reports).toBe(3);
  });
});
