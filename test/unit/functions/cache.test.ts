/**
 * The fit cache as the cell functions use it: FIT, PROB, CLASS, MARGIN and REPORT over the same
 * ranges cost one fit; scoring options (threshold) never refit; any change of the inputs (edited,
 * appended or deleted rows) or of a fit option refits and changes the outputs: no stale results.
 * Fits are counted by spying on the engine's trainModel.
 */
import * as spector from "../../fixtures/binary/spector.json";
import * as model from "../../../src/engine/model";
import { fit, margin, predictClass, prob, report } from "../../../src/functions/functions";
import { modelCacheKey, readModelOptions } from "../../../src/shared/fitService";
import { DEFAULT_MAX_ENTRIES, sharedFitCache } from "../../../src/shared/fitCache";
import { OMITTED, column, failure, lookup, table, type Range } from "./excel";

const d = spector.data;
const labels = () => column("GRADE", d.GRADE);
const predictors = () => table({ GPA: d.GPA, TUCE: d.TUCE, PSI: d.PSI });

let trains: jest.SpyInstance;
beforeEach(() => {
  sharedFitCache().clear();
  trains = jest.spyOn(model, "trainModel");
});
afterEach(() => trains.mockRestore());

describe("one fit per distinct input", () => {
  test("FIT, PROB, CLASS, MARGIN and REPORT over one range cost one fit", () => {
    fit(labels(), predictors(), OMITTED);
    prob(labels(), predictors(), OMITTED, OMITTED);
    predictClass(labels(), predictors(), OMITTED, OMITTED);
    margin(labels(), predictors(), OMITTED, OMITTED);
    report(labels(), predictors(), OMITTED);
    expect(trains).toHaveBeenCalledTimes(1);
    expect(sharedFitCache().stats()).toMatchObject({ misses: 1, hits: 4, entries: 1 });
  });

  test("scoring new rows and changing the threshold reuse the fit", () => {
    prob(labels(), predictors(), OMITTED, OMITTED);
    prob(labels(), predictors(), table({ GPA: [3], TUCE: [20], PSI: [1] }), OMITTED);
    predictClass(labels(), predictors(), OMITTED, [["threshold=0.2"]]);
    margin(labels(), predictors(), OMITTED, [["threshold", 0.7]]);
    expect(trains).toHaveBeenCalledTimes(1);
  });

  test("a fit option (penalty) is part of the key: a second fit", () => {
    fit(labels(), predictors(), OMITTED);
    fit(labels(), predictors(), [["penalty=0.5"]]);
    fit(labels(), predictors(), [["penalty=0.5"]]);
    expect(trains).toHaveBeenCalledTimes(2);
  });

  test("options written differently but meaning the same share the fit", () => {
    fit(labels(), predictors(), [["level=0.9; firth=false"]]);
    fit(labels(), predictors(), [["Level", 0.9], ["FIRTH", "no"]]);
    expect(trains).toHaveBeenCalledTimes(1);
  });
});

describe("the key the cell functions compute", () => {
  test("is modelCacheKey's (the task pane's), for a small call and for one near the payload limit", () => {
    const small = { l: labels() as unknown as (string | number)[][], p: predictors() as unknown as (string | number)[][] };
    // 150,000 rows x 2 cells: beyond the 26-bytes-per-cell quick bound, so the sizes computed while hashing decide.
    const n = 150_000;
    const big = {
      l: [["y"], ...Array.from({ length: n }, (_, i) => [i % 3 === 0 ? 1 : 0])],
      p: [["x"], ...Array.from({ length: n }, (_, i) => [Math.sin(i) + (i % 3 === 0 ? 0.7 : 0)])],
    };
    for (const { l, p } of [small, big]) {
      sharedFitCache().clear();
      fit(l, p, OMITTED);
      const key = modelCacheKey(l, p, readModelOptions("ODDS.FIT", null).model);
      expect(sharedFitCache().has(key)).toBe(true);
    }
  });
});

describe("no stale results", () => {
  test("editing one cell refits and changes the probabilities", () => {
    const before = prob(labels(), predictors(), OMITTED, OMITTED);
    const edited = predictors();
    edited[5][0] = (edited[5][0] as number) + 0.5;
    const after = prob(labels(), edited, OMITTED, OMITTED);
    expect(trains).toHaveBeenCalledTimes(2);
    expect(after[5][0]).not.toBe(before[5][0]);
  });

  test("appending a row refits; the output grows by one row", () => {
    const before = fit(labels(), predictors(), OMITTED);
    const l = labels();
    const p = predictors();
    l.push([1]);
    p.push([2.1, 18, 0]);
    const after = fit(l, p, OMITTED);
    expect(trains).toHaveBeenCalledTimes(2);
    expect(after[2][2]).not.toBe(before[2][2]);
    expect(prob(l, p, OMITTED, OMITTED)).toHaveLength(34);
  });

  test("deleting a row refits", () => {
    const before = report(labels(), predictors(), OMITTED);
    const l = labels();
    const p = predictors();
    l.splice(7, 1);
    p.splice(7, 1);
    const after = report(l, p, OMITTED);
    expect(trains).toHaveBeenCalledTimes(2);
    expect(lookup(after, "rows used")).toBe(31);
    expect(lookup(after, "log-likelihood")).not.toBe(lookup(before, "log-likelihood"));
  });

  test("turning a number into the same number as text refits (the cell changed)", () => {
    fit(labels(), predictors(), OMITTED);
    const p: Range = predictors();
    p[3][1] = String(p[3][1]);
    fit(labels(), p, OMITTED);
    expect(trains).toHaveBeenCalledTimes(2);
  });

  test("an input error is not cached: fixing the input gives a result", () => {
    const broken = predictors();
    broken[2][0] = "abc";
    expect(failure(() => fit(labels(), broken, OMITTED)).code).toBe("NOT_A_NUMBER");
    expect(fit(labels(), predictors(), OMITTED)[0][1]).toBe("term");
  });
});

describe("bounds", () => {
  test(`keeps at most ${DEFAULT_MAX_ENTRIES} fits, dropping the least recently used`, () => {
    for (let k = 0; k <= DEFAULT_MAX_ENTRIES; k++) fit(labels(), predictors(), [["level", 0.5 + k / 100]]);
    expect(sharedFitCache().stats().entries).toBe(DEFAULT_MAX_ENTRIES);
    fit(labels(), predictors(), [["level", 0.5]]); // the first one was evicted: a refit
    expect(trains).toHaveBeenCalledTimes(DEFAULT_MAX_ENTRIES + 2);
  });
});
