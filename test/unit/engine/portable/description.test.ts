/**
 * The model description round trip: describeModel -> JSON text -> readDescription -> restoreModel
 * scores new rows as the fitted TrainedModel does (binary with text, boolean and aliased predictors,
 * offsets, multi-class in both forms, basis recipe state), and the reader's refusals: a newer major
 * version, text that is not JSON or not ours, and damaged fields, each naming the field.
 */
import { applyRecipe, fitRecipe, parseRecipe, scoreRows, trainModel, type CellValue, type RowScores, type TrainedModel } from "../../../../src/engine";
import { tableBasisColumns } from "../../../../src/engine/evaluation/foldPredictors";
import { readTable } from "../../../../src/engine/data/table";
import { describeModel } from "../../../../src/engine/portable/describeModel";
import { DESCRIPTION_VERSION } from "../../../../src/engine/portable/modelDescription";
import { readDescription } from "../../../../src/engine/portable/readDescription";
import { restoreModel, scoreRestored } from "../../../../src/engine/portable/restoreModel";
import type { RecipeState } from "../../../../src/engine/basis/recipe";
import { caught } from "../../../support/caught";

/** Required agreement: the brief's 1e-12 (the numbers travel through JSON exactly, so 0 is expected). */
const ROUND_TRIP = 1e-12;

/** Invented apple-crate rows: weight, grade (text), waxed (TRUE/FALSE), a copy of weight (aliased), sorted-to class. */
function crates(n: number, seed: number): CellValue[][] {
  const rows: CellValue[][] = [["weight", "grade", "waxed", "weight2", "bin", "days"]];
  let s = seed;
  const next = () => ((s = (s * 1103515245 + 12345) % 2147483648) / 2147483648);
  for (let i = 0; i < n; i++) {
    const weight = 90 + 60 * next();
    const grade = ["A", "B", "C"][Math.floor(next() * 3)];
    const waxed = next() < 0.4;
    const z = 0.04 * (weight - 120) + (grade === "B" ? 0.8 : grade === "C" ? -0.6 : 0) + (waxed ? 0.5 : 0) + (next() - 0.5) * 3;
    const bin = z > 0.7 ? "keep" : z > -0.7 ? "juice" : "compost";
    rows.push([weight, grade, waxed, weight, bin, 1 + Math.floor(next() * 9)]);
  }
  return rows;
}

const cols = (rows: CellValue[][], names: string[]) => rows.map((r) => names.map((n) => r[(rows[0] as string[]).indexOf(n)]));

/** Throws unless both scorings agree on every row, number for number. */
function expectSameScores(a: RowScores, b: RowScores): void {
  expect(b.rows).toBe(a.rows);
  expect(b.classes).toEqual(a.classes);
  expect(Array.from(b.scored)).toEqual(Array.from(a.scored));
  expect(b.predictedClass).toEqual(a.predictedClass);
  expect(b.problems.map((p) => [p.index, p.code])).toEqual(a.problems.map((p) => [p.index, p.code]));
  const arrays = (s: RowScores) => [...s.prediction.probabilities, s.prediction.margin, s.prediction.linearPredictor, s.prediction.linearPredictorSE, s.prediction.lower, s.prediction.upper];
  const [xa, xb] = [arrays(a), arrays(b)];
  xa.forEach((x, k) => {
    if (!x) return expect(xb[k]).toBeUndefined();
    const y = xb[k] as Float64Array;
    for (let i = 0; i < x.length; i++) {
      if (Number.isNaN(x[i])) expect(y[i]).toBeNaN();
      else expect(Math.abs(y[i] - x[i])).toBeLessThanOrEqual(ROUND_TRIP * Math.max(1, Math.abs(x[i])));
    }
  });
}

function textOf(model: TrainedModel, basis: RecipeState | null = null): string {
  return JSON.stringify(describeModel(model, { name: "crates", producerVersion: "0.1.0", basis, created: "2026-12-04T00:00:00Z" }));
}

const train = crates(120, 7);
const fresh = crates(40, 99);
// New rows with a blank, an unseen grade and text in a number column: the same per-row problems.
fresh[3][0] = null;
fresh[5][1] = "D";
fresh[8][2] = "maybe";

describe("round trip: scores from the description equal the fitted model's", () => {
  test("binary with a text, a TRUE/FALSE and an aliased predictor", () => {
    const labels = train.map((r, i) => [i === 0 ? "kept" : r[4] === "keep" ? "yes" : "no"]);
    const names = ["weight", "grade", "waxed", "weight2"];
    const model = trainModel(labels, cols(train, names), {});
    expect(model.fit.aliased).toContain(true);
    const restored = restoreModel(readDescription(textOf(model)));
    expectSameScores(scoreRows(model, cols(fresh, names)), scoreRows(restored, cols(fresh, names)));
    expectSameScores(scoreRows(model, cols(fresh, names), { threshold: 0.3 }), scoreRows(restored, cols(fresh, names), { threshold: 0.3 }));
  });

  test("the comparison can fail: a coefficient moved by 1e-9 changes the scores beyond the tolerance", () => {
    const names = ["weight", "grade"];
    const model = trainModel(cols(train, ["bin"]), cols(train, names), {});
    const d = JSON.parse(textOf(model));
    d.equations[0].coefficients[1] += 1e-9;
    const a = scoreRows(model, cols(fresh, names)).prediction.probabilities[0];
    const b = scoreRows(restoreModel(readDescription(d)), cols(fresh, names)).prediction.probabilities[0];
    expect(a.filter((x) => Number.isFinite(x)).length).toBeGreaterThan(30);
    expect(Math.max(...Array.from(a, (x, i) => (Number.isFinite(x) ? Math.abs(x - b[i]) : 0)))).toBeGreaterThan(ROUND_TRIP);
  });

  test("binary with an offset needs the offset column again", () => {
    const labels = train.map((r, i) => [i === 0 ? "kept" : r[4] === "keep" ? 1 : 0]);
    const offset = train.map((r, i) => [i === 0 ? "log days" : Math.log(r[5] as number)]);
    const model = trainModel(labels, cols(train, ["weight", "grade"]), { offset });
    const desc = readDescription(textOf(model));
    expect(desc.offset).toEqual({ column: "log days" });
    const newOffset = fresh.map((r, i) => [i === 0 ? "log days" : Math.log(r[5] as number)]);
    expectSameScores(scoreRows(model, cols(fresh, ["weight", "grade"]), { offset: newOffset }), scoreRows(restoreModel(desc), cols(fresh, ["weight", "grade"]), { offset: newOffset }));
  });

  test.each([
    ["reference", {}],
    ["symmetric", { form: "symmetric" as const, penalty: 0.5 }],
  ])("multi-class, %s form", (_, options) => {
    const names = ["weight", "grade", "waxed"];
    const model = trainModel(cols(train, ["bin"]), cols(train, names), options);
    const restored = restoreModel(readDescription(textOf(model)));
    expect(restored.fit.equationClasses).toEqual(model.fit.equationClasses);
    expectSameScores(scoreRows(model, cols(fresh, names)), scoreRows(restored, cols(fresh, names)));
  });

  test("basis recipe state: the description scores raw data rows through the stored recipe", () => {
    const recipe = "weight: ns(3) + z; grade: levels(ref=B)";
    const raw = cols(train, ["weight", "grade", "waxed"]);
    const state = fitRecipe(parseRecipe(recipe), tableBasisColumns(readTable(raw, { argument: "data", headers: "yes" })));
    const predictorsOf = (data: CellValue[][]) => {
      const block = applyRecipe(state, tableBasisColumns(readTable(data, { argument: "data", headers: "yes" })));
      return [[...block.names, "waxed"], ...data.slice(1).map((r, i) => [...block.columns.map((c) => (Number.isFinite(c[i]) ? c[i] : null)), r[2]])];
    };
    const model = trainModel(cols(train, ["bin"]), predictorsOf(raw), {});
    const desc = readDescription(textOf(model, state));
    expect(desc.basis?.names).toEqual(state.names);
    const rawFresh = cols(fresh, ["weight", "grade", "waxed"]);
    rawFresh[5][1] = "A"; // the recipe's levels have no "D": the row would differ only by the message
    expectSameScores(scoreRows(model, predictorsOf(rawFresh), { headers: "yes" }), scoreRestored(restoreModel(desc), rawFresh));
  });

  test("the description read back is the description written (every field kept)", () => {
    const model = trainModel(cols(train, ["bin"]), cols(train, ["weight", "grade"]), {});
    const text = textOf(model);
    expect(JSON.stringify(readDescription(text))).toBe(text);
  });

  test("a restored model holds no data rows: scoring nothing says to give rows", () => {
    const model = trainModel(cols(train, ["bin"]), cols(train, ["weight", "grade"]), {});
    expect(caught(() => scoreRows(restoreModel(readDescription(textOf(model))), null)).code).toBe("DESCRIPTION_NEEDS_ROWS");
  });
});

describe("version rule and refusals", () => {
  const model = trainModel(cols(train, ["bin"]), cols(train, ["weight", "grade"]), {});
  const doc = () => JSON.parse(textOf(model));

  test("a newer major version is refused with the version and what to do", () => {
    const newer = { ...doc(), formatVersion: "2.0", producer: { name: "Oddsmith", version: "3.1.0" } };
    const e = caught(() => readDescription(JSON.stringify(newer)));
    expect(e.code).toBe("DESCRIPTION_NEWER");
    expect(e.message).toContain("format version 2.0");
    expect(e.message).toContain("Oddsmith 3.1.0");
    expect(e.message).toContain(`reads format ${DESCRIPTION_VERSION}`);
    expect(e.message).toContain("Update the Oddsmith add-in");
  });

  test("a newer minor version of the same major is read; fields it adds are ignored", () => {
    const later = { ...doc(), formatVersion: "1.9", calibration: { added: "later" } };
    expect(readDescription(later).terms).toEqual(model.fit.terms);
  });

  test.each([
    ["not JSON", "{ not json", "DESCRIPTION_NOT_JSON"],
    ["a list", "[1, 2]", "DESCRIPTION_NOT_JSON"],
    ["another format", JSON.stringify({ format: "spreadsheet", formatVersion: "1.0" }), "DESCRIPTION_NOT_OURS"],
  ])("%s is refused", (_, text, code) => {
    expect(caught(() => readDescription(text)).code).toBe(code);
  });

  const damage: [string, (d: any) => void, string, string][] = [
    ["a coefficient is text", (d) => (d.equations[0].coefficients[1] = "0.3"), "DESCRIPTION_FIELD", "equations[0].coefficients[1]"],
    ["a coefficient of a kept term is null", (d) => (d.equations[1].coefficients[0] = null), "DESCRIPTION_FIELD", "equations[1].coefficients[0]"],
    ["a coefficient list is short", (d) => d.equations[0].coefficients.pop(), "DESCRIPTION_FIELD", "equations[0].coefficients"],
    ["a class repeats", (d) => (d.label.classes[2] = d.label.classes[0]), "DESCRIPTION_INCONSISTENT", "label.classes"],
    ["an equation predicts the wrong class", (d) => (d.equations[0].class = d.label.referenceClass), "DESCRIPTION_INCONSISTENT", "equations[0].class"],
    ["the terms disagree with the encodings", (d) => (d.terms[2] = "grade=Z"), "DESCRIPTION_INCONSISTENT", "terms"],
    ["a level is missing", (d) => d.predictors.columns[1].levels.pop(), "DESCRIPTION_INCONSISTENT", "predictors.columns[1].terms"],
    ["the covariance has the wrong size", (d) => d.covariance.pop(), "DESCRIPTION_FIELD", "covariance"],
    ["the threshold is 1", (d) => (d.options.threshold = 1), "DESCRIPTION_FIELD", "options.threshold"],
    ["the kind is missing", (d) => delete d.kind, "DESCRIPTION_FIELD", "kind"],
    ["an offset on a multi-class model", (d) => (d.offset = { column: "x" }), "DESCRIPTION_INCONSISTENT", "offset"],
    ["a class count is negative", (d) => (d.data.classCounts[0] = -1), "DESCRIPTION_FIELD", "data.classCounts[0]"],
  ];
  test.each(damage)("damaged: %s (the message names the field)", (_, change, code, field) => {
    const d = doc();
    change(d);
    const e = caught(() => readDescription(JSON.stringify(d)));
    expect(e.code).toBe(code);
    expect(e.message).toContain(`"${field}"`);
  });

  test("a damaged basis state names its field", () => {
    const raw = cols(train, ["weight", "grade"]);
    const state = fitRecipe(parseRecipe("weight: ns(4)"), tableBasisColumns(readTable(raw, { argument: "data", headers: "yes" })));
    const block = applyRecipe(state, tableBasisColumns(readTable(raw, { argument: "data", headers: "yes" })));
    const preds = [block.names, ...raw.slice(1).map((_, i) => block.columns.map((c) => c[i]))];
    const d = JSON.parse(textOf(trainModel(cols(train, ["bin"]), preds, {}), state));
    d.basis.states[0].knots.reverse();
    const e = caught(() => readDescription(d));
    expect(e.code).toBe("DESCRIPTION_INCONSISTENT");
    expect(e.message).toContain('"basis.states[0].knots"');
  });
});
