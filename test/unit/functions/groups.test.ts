/**
 * ODDS.GROUPS as the sheet calls it: the hand-computed table of
 * test/unit/engine/evaluation/groupComparison.test.ts as ranges, agreement with ODDS.CONFUSION run
 * on each group's rows, the fit mode on the demo crates (group column also a predictor) against the
 * pane's borderline rule, and the refusals.
 */
import { groups, confusion } from "../../../src/functions/functions";
import { DEMO_SHEETS } from "../../../src/preview/demo";
import { nearBoundaryRows, scoreRows, trainModel } from "../../../src/engine";
import { DEFAULT_REVIEW } from "../../../src/taskpane/review";
import { OMITTED, column, expectCleanCells, failure } from "./excel";

/** Sums of a few two-decimal numbers: exact to rounding. */
const EXACT = 12;

const ys = [1, 1, 0, 0, 1, 0, 1, 0, 0, 0].map((v) => (v === 1 ? "yes" : "no"));
const ps = [0.9, 0.55, 0.62, 0.2, 0.3, 0.45, 0.8, 0.58, 0.35, 0.1];
const gs = ["A", "A", "A", "A", "A", "A", "B", "B", "B", "B"];
const labels = () => column("bought", ys);
const probs = () => column("P(yes)", ps);
const group = () => column("region", gs);
const rowOf = (out: unknown[][], name: string) => out.find((r) => r[0] === name) as unknown[];

describe("ODDS.GROUPS with probabilities", () => {
  const out = groups(labels(), probs(), group(), OMITTED);

  test("header names the group column, the positive class and the reference group", () => {
    expectCleanCells(out);
    expect(out[0]).toEqual([
      "group (region)", "rows", "positives (yes)", "observed rate", "mean P(yes)", "calibration-in-the-large (observed - predicted)",
      "sensitivity", "specificity", "positive rate (flagged / rows)", "borderline rows", "borderline share",
      "positive rate ratio (vs A)", "sensitivity ratio (vs A)", "specificity ratio (vs A)", "observed rate ratio (vs A)",
      "mean predicted ratio (vs A)", "borderline share ratio (vs A)",
    ]);
  });

  test("the hand-computed figures and ratios", () => {
    const a = rowOf(out, "A");
    const b = rowOf(out, "B");
    const all = rowOf(out, "all rows");
    expect([a[1], a[2], a[9], b[1], b[2], b[9], all[1], all[2], all[9]]).toEqual([6, 3, 2, 4, 1, 1, 10, 4, 3]);
    const close = (got: unknown, want: number) => expect(got as number).toBeCloseTo(want, EXACT);
    close(a[4], 3.02 / 6);
    close(b[5], -0.2075);
    close(b[6], 1);
    close(b[7], 2 / 3);
    close(b[8], 0.5);
    // Ratios B / A: positive rate 1, sensitivity 1.5, specificity 1, observed 0.5, mean predicted, borderline share 0.75.
    [1, 1.5, 1, 0.5, 10.98 / 12.08, 0.75].forEach((want, k) => close(b[11 + k], want));
    expect(all.slice(11)).toEqual(["", "", "", "", "", ""]);
  });

  test("settings, counts and the caution follow the table", () => {
    expect(out.some((r) => r[0] === "threshold 0.5 (flagged when P(yes) >= threshold); borderline: |P(yes) - threshold| <= 0.1")).toBe(true);
    expect(rowOf(out, "rows used")[1]).toBe(10);
    expect(rowOf(out, "rows skipped (blank group)")[1]).toBe(0);
    expect(out.some((r) => /^These figures show statistical associations .* not causes.*local law and professional standards/.test(String(r[0])))).toBe(true);
  });

  test("each group's sensitivity and specificity equal ODDS.CONFUSION on that group's rows", () => {
    for (const [name, rows] of [["A", [0, 1, 2, 3, 4, 5]], ["B", [6, 7, 8, 9]]] as const) {
      const c = confusion(column("bought", rows.map((i) => ys[i])), column("P(yes)", rows.map((i) => ps[i])), [["threshold=0.5"]]);
      const value = (what: RegExp) => c.find((r) => what.test(String(r[0])))?.[1];
      const g = rowOf(out, name);
      expect(g[6]).toBe(value(/^sensitivity/));
      expect(g[7]).toBe(value(/^specificity/));
    }
  });

  test("versus, threshold and band options; a blank group skips the row", () => {
    const withBlank = gs.slice();
    withBlank[9] = "";
    const o = groups(labels(), probs(), column("region", withBlank), [["versus=B; threshold=0.6; band=0.05"]]);
    expect(o[0][11]).toBe("positive rate ratio (vs B)");
    expect(rowOf(o, "B")[1]).toBe(3);
    expect(rowOf(o, "rows skipped (blank group)")[1]).toBe(1);
    expect(rowOf(o, "A")[9]).toBe(2);
  });

  test("refusals: fit options without fit=true, unequal heights, an error cell, an unknown group", () => {
    const fitOnly = failure(() => groups(labels(), probs(), group(), [["penalty=1"]]));
    expect([fitOnly.code, fitOnly.message]).toEqual(["BAD_OPTION_VALUE", expect.stringMatching(/fits nothing unless fit=true/)]);
    expect(failure(() => groups(labels(), probs(), column("region", gs.slice(0, 9)), OMITTED)).code).toBe("RANGE_SHAPE_MISMATCH");
    const err = gs.slice() as unknown[];
    err[3] = "#N/A";
    const errorCell = failure(() => groups(labels(), probs(), column("region", err as string[]), OMITTED));
    expect([errorCell.code, errorCell.message]).toEqual(["ERROR_VALUE_CELL", expect.stringMatching(/group range holds the error value #N\/A in row 5, column 1/)]);
    expect(failure(() => groups(labels(), probs(), group(), [["versus=C"]])).code).toBe("GROUP_NOT_FOUND");
  });
});

describe("ODDS.GROUPS with fit=true on the demo crates (block is a predictor and the group)", () => {
  const values = DEMO_SHEETS[0].values as unknown[][];
  const labelCells = values.map((r) => [r[6]]) as never;
  const predictorCells = values.map((r) => r.slice(1, 6)) as never;
  const blockCells = values.map((r) => [r[1]]) as never;

  test("borderline rows per block are the pane's review rule (band and interval test) on that block", () => {
    const out = groups(labelCells, predictorCells, blockCells, [["fit=true; positive=yes"]]);
    expectCleanCells(out);
    expect(out.some((r) => String(r[0]).endsWith("or the probability interval holds the threshold"))).toBe(true);
    const model = trainModel(labelCells, predictorCells, { positive: "yes" });
    const s = scoreRows(model, null);
    for (const block of ["Hilltop", "Old wall", "River bend"]) {
      const idx = values.slice(1).map((r, i) => (r[1] === block ? i : -1)).filter((i) => i >= 0);
      const pick = (a: Float64Array) => Float64Array.from(idx, (i) => a[i]);
      const review = nearBoundaryRows(
        { probabilities: s.prediction.probabilities.map(pick), predicted: new Int32Array(idx.length), margin: new Float64Array(idx.length), lower: pick(s.prediction.lower!), upper: pick(s.prediction.upper!) },
        { threshold: DEFAULT_REVIEW.threshold, band: DEFAULT_REVIEW.band, undecided: DEFAULT_REVIEW.undecided },
      );
      expect([block, rowOf(out, block)[1], rowOf(out, block)[9]]).toEqual([block, idx.length, review.total]);
      // A text predictor's indicators make the likelihood equations sum(y - p) = 0 over each of its
      // levels (and the intercept over the reference level): in-sample, observed = predicted per block.
      expect(Math.abs(rowOf(out, block)[5] as number)).toBeLessThan(1e-8);
    }
  });

  test("several classes are refused (grade has three)", () => {
    const grade = values.map((r) => [r[7]]) as never;
    expect(failure(() => groups(grade, predictorCells, blockCells, [["fit=true"]])).code).toBe("BINARY_METRIC_ONLY");
  });
});
