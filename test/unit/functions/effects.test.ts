/**
 * ODDS.EFFECTS as the sheet calls it: the Spector & Mazzeo grades data gives Stata 11's `margins`
 * average marginal effects (results_discrete.py, fixture test/fixtures/binary/spector.py); a text
 * predictor's levels read "change from <reference>"; the fit is FIT's cached one; what cannot be
 * shown is said; bad input gets a catalogue message.
 */
import * as spector from "../../fixtures/binary/spector.json";
import * as model from "../../../src/engine/model";
import { effects, fit } from "../../../src/functions/functions";
import { sharedFitCache } from "../../../src/shared/fitCache";
import { OMITTED, column, expectCleanCells, failure, table, relDiff } from "./excel";

/** Stata held the data in single precision (see test/unit/engine/evaluation/marginalEffects.test.ts). */
const STATA_TOL = 1e-6;
const d = spector.data;
const labels = () => column("GRADE", d.GRADE.map((g) => (g === 1 ? "up" : "same")));
const predictors = () => table({ GPA: d.GPA, TUCE: d.TUCE, PSI: d.PSI });

describe("ODDS.EFFECTS", () => {
  test("Spector: header, one row per term, Stata's effects and SEs, the caution below", () => {
    const out = effects(labels(), predictors(), OMITTED);
    expectCleanCells(out);
    expect(out[0]).toEqual(["term", "effect", "average marginal effect on P(up)", "std. error", "z", "p", "lower 95%", "upper 95%"]);
    expect(out.slice(1, 4).map((r) => [r[0], r[1]])).toEqual([
      ["GPA", "slope (dP/dx)"],
      ["TUCE", "slope (dP/dx)"],
      ["PSI", "change 0 -> 1"],
    ]);
    const stata = spector.marginal_effects.stata_change;
    out.slice(1, 4).forEach((r, i) => {
      expect(relDiff(r[2] as number, stata.effects[i])).toBeLessThan(STATA_TOL);
      // Stata printed 7 decimals of the SE.
      expect(Math.abs((r[3] as number) - stata.se[i])).toBeLessThan(1e-7);
    });
    expect(out[4].every((v) => v === "")).toBe(true);
    expect(out[5][0]).toMatch(/^These are average changes in the fitted probability of up over the 32 rows used: statistical associations of the model, not causes\./);
  });

  test("indicators=slope gives the derivative for PSI (Stata's 0.3051777)", () => {
    const out = effects(labels(), predictors(), [["indicators=slope"]]);
    expect(out[3][1]).toBe("slope (dP/dx)");
    expect(relDiff(out[3][2] as number, spector.marginal_effects.stata_slope.effects[2])).toBeLessThan(STATA_TOL);
  });

  test("a text predictor's levels change from its reference (baseline option), and level=0.9 labels the interval", () => {
    const shade = d.TUCE.map((t) => (t < 20 ? "low" : t < 25 ? "mid" : "high"));
    const out = effects(labels(), table({ GPA: d.GPA, shade }), [["baseline=shade:mid; level=0.9"]]);
    expect(out[0].slice(6)).toEqual(["lower 90%", "upper 90%"]);
    expect(out.slice(1, 4).map((r) => [r[0], r[1]])).toEqual([
      ["GPA", "slope (dP/dx)"],
      ["shade=high", "change from mid"],
      ["shade=low", "change from mid"],
    ]);
  });

  test("shares FIT's cached fit (one fit for both, threshold accepted as FIT accepts it)", () => {
    sharedFitCache().clear();
    const trains = jest.spyOn(model, "trainModel");
    try {
      fit(labels(), predictors(), [["threshold=0.3"]]);
      effects(labels(), predictors(), [["threshold=0.3; indicators=slope"]]);
      expect(trains).toHaveBeenCalledTimes(1);
    } finally {
      trains.mockRestore();
    }
  });

  test("a penalized fit shows effects without SE, z, p or interval, and says why", () => {
    const out = effects(labels(), predictors(), [["penalty=1"]]);
    expectCleanCells(out);
    expect(typeof out[1][2]).toBe("number");
    expect(out[1].slice(3)).toEqual(["", "", "", "", ""]);
    expect(out.some((r) => /without standard errors, z, p or intervals/.test(String(r[0])))).toBe(true);
  });

  test("several classes, separation and unknown options are refused with catalogue messages", () => {
    const three = failure(() => effects(column("c", ["a", "b", "c", "a", "b", "c", "b", "a"]), column("x", [1, 2, 3, 1, 3, 2, 2, 1]), OMITTED));
    expect([three.cellError, three.code]).toEqual(["#VALUE!", "EFFECTS_TWO_CLASSES_ONLY"]);
    const separated = failure(() => effects(column("y", [0, 0, 0, 1, 1, 1]), column("x", [1, 2, 3, 4, 5, 6]), OMITTED));
    expect([separated.cellError, separated.code]).toEqual(["#N/A", "SEPARATION_COMPLETE"]);
    const unknown = failure(() => effects(labels(), predictors(), [["dummies=yes"]]));
    expect(unknown.code).toBe("UNKNOWN_OPTION");
    expect(unknown.message).toMatch(/indicators/);
  });
});
