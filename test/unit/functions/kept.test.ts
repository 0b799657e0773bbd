/**
 * ODDS.KEPT(model_cells, rows, [options]): a model kept in the workbook as cells (header + parts of
 * its description) scores new rows as the fitted model does, without refitting. The reference is
 * ODDS.PROB / ODDS.CLASS over the training ranges (the fit itself is checked against R and Stata
 * elsewhere). Then the refusals: a newer format, missing, moved or edited parts, and output bounds.
 */
import { describeModel, DESCRIPTION_VERSION, type CellValue, type TrainedModel } from "../../../src/engine";
import { evaluateCellFunction } from "../../../src/functions/registry";
import { kept, prob, predictClass } from "../../../src/functions/functions";
import { fitForCell } from "../../../src/shared/fitService";
import { readModelOptions } from "../../../src/shared/fitService";
import { sharedFitCache } from "../../../src/shared/fitCache";
import { KEPT_SHEET, PART_CHARS, keptCells, readKeptText, textCheck } from "../../../src/shared/keptModel";
import { formatMessage } from "../../../src/shared/messages";
import { MAX_CELL_TEXT, MAX_OUTPUT_CELLS, SHEET_COLUMNS } from "../../../src/shared/sheetLimits";
import { OMITTED, expectCleanCells, failure, type Range } from "./excel";

/** The brief's agreement for a model read back from the workbook (JSON keeps doubles exactly: 0 is expected). */
const ROUND_TRIP = 1e-12;

/** Invented crate rows: weight, grade (text), waxed (TRUE/FALSE) and the bin each crate went to. */
function crates(n: number, seed: number): CellValue[][] {
  const rows: CellValue[][] = [["weight", "grade", "waxed", "bin"]];
  let s = seed;
  const next = () => (s = (s * 1103515245 + 12345) % 2147483648) / 2147483648;
  for (let i = 0; i < n; i++) {
    const weight = Math.round((90 + 60 * next()) * 10) / 10;
    const grade = ["A", "B", "C"][Math.floor(next() * 3)];
    const waxed = next() < 0.4;
    const z = 0.04 * (weight - 120) + (grade === "B" ? 0.8 : grade === "C" ? -0.6 : 0) + (waxed ? 0.5 : 0) + (next() - 0.5) * 3;
    rows.push([weight, grade, waxed, z > 0.7 ? "keep" : z > -0.7 ? "juice" : "compost"]);
  }
  return rows;
}

const pick = (rows: CellValue[][], names: string[]) => rows.map((r) => names.map((n) => r[(rows[0] as string[]).indexOf(n)]));
const train = crates(150, 11);
const fresh = crates(30, 5);
fresh[4][0] = null; // a blank weight: that row stays blank
fresh[6][1] = "D"; // an unseen grade: that row stays blank
const predictors = pick(train, ["weight", "grade", "waxed"]);
const newRows = pick(fresh, ["weight", "grade", "waxed"]);
const binaryLabels = train.map((r, i) => [i === 0 ? "kept" : r[3] === "keep" ? "yes" : "no"]);
const binLabels = pick(train, ["bin"]);

/** The model the cell functions fit for these ranges (the same cached fit as ODDS.PROB). */
function modelOf(labels: Range, x: Range, options: string | null = null): TrainedModel {
  return fitForCell({ labels, predictors: x, options: readModelOptions("ODDS.FIT", options === null ? null : [[options]]) }, 0);
}

/** The kept model's row as the pane writes it on the kept-models sheet. */
function keptRow(model: TrainedModel, edit: (text: string) => string = (t) => t, version?: string): Range {
  const text = edit(JSON.stringify(describeModel(model, { name: "crates", producerVersion: "0.1.0", created: "2026-12-05T13:00:00Z" })));
  return [keptCells(text, { name: "crates", written: "2026-12-05T13:00:00Z", producer: "0.1.0", version })];
}

/** Every cell equal: numbers within ROUND_TRIP relative, text and blanks exactly. */
function expectSameCells(got: Range, want: Range): void {
  expect(got.length).toBe(want.length);
  got.forEach((row, i) => {
    expect(row.length).toBe(want[i].length);
    row.forEach((v, j) => {
      const w = want[i][j];
      if (typeof w === "number") {
        expect(typeof v).toBe("number");
        expect(Math.abs((v as number) - w)).toBeLessThanOrEqual(ROUND_TRIP * Math.max(1, Math.abs(w)));
      } else expect(v).toBe(w);
    });
  });
}

beforeEach(() => sharedFitCache().clear());

describe("round trip through the kept cells: the same numbers as the fitted model", () => {
  test("two classes with a text and a TRUE/FALSE predictor: ODDS.KEPT equals ODDS.PROB on new rows", () => {
    const row = keptRow(modelOf(binaryLabels, predictors));
    const got = kept(row, newRows, OMITTED);
    const want = prob(binaryLabels, predictors, newRows, OMITTED);
    expect(got[0]).toEqual(["P(yes)"]);
    expect(got[4]).toEqual([""]); // the blank weight (fresh row 4)
    expect(got[6]).toEqual([""]); // the unseen grade (fresh row 6)
    expectSameCells(got, want);
    expectCleanCells(got);
  });

  test("the comparison can fail: a coefficient moved by 1e-9 gives numbers outside the tolerance", () => {
    const model = modelOf(binaryLabels, predictors);
    const moved = keptRow(model, (t) => {
      const d = JSON.parse(t);
      d.equations[0].coefficients[1] += 1e-9;
      return JSON.stringify(d);
    });
    expect(() => expectSameCells(kept(moved, newRows, OMITTED), prob(binaryLabels, predictors, newRows, OMITTED))).toThrow();
  });

  test("three classes: one column per class, and show=class gives ODDS.CLASS's classes", () => {
    const row = keptRow(modelOf(binLabels, predictors));
    const got = kept(row, newRows, OMITTED);
    expect(got[0]).toEqual(["P(compost)", "P(juice)", "P(keep)"]);
    expectSameCells(got, prob(binLabels, predictors, newRows, OMITTED));
    expectSameCells(kept(row, newRows, [["show=class"]]), predictClass(binLabels, predictors, newRows, OMITTED));
  });

  test("a threshold changes the two-class decision without refitting, as in ODDS.CLASS", () => {
    const row = keptRow(modelOf(binaryLabels, predictors));
    expectSameCells(kept(row, newRows, [["show=class; threshold=0.2"]]), predictClass(binaryLabels, predictors, newRows, [["threshold=0.2"]]));
  });

  test("a description of many parts (60 predictors: covariance of 61 x 61) reads back to the same numbers", () => {
    let s = 3;
    const next = () => (s = (s * 1103515245 + 12345) % 2147483648) / 2147483648 - 0.5;
    const names = Array.from({ length: 60 }, (_, j) => `x${j + 1}`);
    const make = (n: number) => [names as CellValue[], ...Array.from({ length: n }, () => names.map(() => next()))];
    const x = make(900);
    const labels = [["ok"], ...x.slice(1).map((r) => [(r as number[]).slice(0, 5).reduce((a, b) => a + b, 0) + next() > 0 ? 1 : 0])];
    const row = keptRow(modelOf(labels, x));
    expect(row[0].length).toBeGreaterThan(3); // header + at least 3 parts
    for (const c of row[0]) expect((c as string).length).toBeLessThanOrEqual(MAX_CELL_TEXT);
    expect((row[0][1] as string).length).toBe("part 1/".length + String(row[0].length - 1).length + 1 + PART_CHARS);
    const rows = make(25);
    expectSameCells(kept(row, rows, OMITTED), prob(labels, x, rows, OMITTED));
  });

  test("a whole-row reference (16,384 cells, blanks after the parts) and a column of the same cells both read", () => {
    const row = keptRow(modelOf(binaryLabels, predictors));
    const whole = [[...row[0], ...new Array(SHEET_COLUMNS - row[0].length).fill(null)]];
    const asColumn = row[0].map((c) => [c]);
    const want = prob(binaryLabels, predictors, newRows, OMITTED);
    expectSameCells(kept(whole, newRows, OMITTED), want);
    expectSameCells(kept(asColumn, newRows, OMITTED), want);
  });

  test("the header cell names the model, the format version, the time, the parts and the check", () => {
    const row = keptRow(modelOf(binaryLabels, predictors));
    const { header, text } = readKeptText(row);
    expect(header).toEqual({ version: DESCRIPTION_VERSION, parts: row[0].length - 1, characters: text.length, check: textCheck(text), written: "2026-12-05T13:00:00Z", producer: "0.1.0", name: "crates" });
    expect(JSON.parse(text).format).toBe("oddsmith-model");
  });
});

describe("refusals, each with its catalogue message", () => {
  const row = () => keptRow(modelOf(binaryLabels, predictors));

  test("a description of a newer major version is refused, in the header or in the JSON", () => {
    const newer = keptRow(modelOf(binaryLabels, predictors), (t) => t.replace(`"formatVersion":"${DESCRIPTION_VERSION}"`, '"formatVersion":"2.0"'), "2.0");
    const f = failure(() => kept(newer, newRows, OMITTED));
    expect(f.code).toBe("DESCRIPTION_NEWER");
    expect(f.message).toBe(formatMessage("DESCRIPTION_NEWER", { version: "2.0", producer: "0.1.0", supported: DESCRIPTION_VERSION, major: 1 }));
    // Header says 1.0 but the JSON says 2.0: the reader of the description refuses it just the same.
    const inside = keptRow(modelOf(binaryLabels, predictors), (t) => t.replace(`"formatVersion":"${DESCRIPTION_VERSION}"`, '"formatVersion":"2.1"'));
    expect(failure(() => kept(inside, newRows, OMITTED)).message).toContain("format version 2.1");
  });

  test("a newer minor version is read (it only adds fields)", () => {
    const minor = keptRow(modelOf(binaryLabels, predictors), (t) => t.replace(`"formatVersion":"${DESCRIPTION_VERSION}"`, '"formatVersion":"1.7","addedLater":true'), "1.7");
    expectSameCells(kept(minor, newRows, OMITTED), prob(binaryLabels, predictors, newRows, OMITTED));
  });

  test("a range that does not start at the header cell", () => {
    const f = failure(() => kept([row()[0].slice(1)], newRows, OMITTED));
    expect(f.code).toBe("KEPT_NOT_FOUND");
    expect(f.message).toContain(`${KEPT_SHEET}!2:2`);
  });

  test("a missing part names the part and the cell", () => {
    const r = keptRow(modelOf(binaryLabels, predictors), (t) => t + " ".repeat(2 * PART_CHARS)); // 3 parts
    expect(r[0].length).toBe(4);
    const missing = [[r[0][0], r[0][1], null, r[0][3]]];
    const f = failure(() => kept(missing, newRows, OMITTED));
    expect(f.code).toBe("KEPT_PART");
    expect(f.message).toContain("part 2 (cell 3 of the model_cells range");
    expect(f.message).toContain("is missing");
    const cut = [r[0].slice(0, 3)];
    expect(failure(() => kept(cut, newRows, OMITTED)).message).toContain("part 3");
  });

  test("parts in the wrong order are refused", () => {
    const r = keptRow(modelOf(binaryLabels, predictors), (t) => t + " ".repeat(2 * PART_CHARS));
    const swapped = [[r[0][0], r[0][2], r[0][1], r[0][3]]];
    const f = failure(() => kept(swapped, newRows, OMITTED));
    expect(f.code).toBe("KEPT_PART");
    expect(f.message).toContain('is "part 2/3:" where "part 1/3:" belongs');
  });

  test("an edited part (one digit of a coefficient) is caught by the check", () => {
    const r = row();
    const part = r[0][1] as string;
    const at = part.search(/"coefficients":\[-?\d/) + '"coefficients":['.length;
    const digit = part[at] === "-" ? at + 1 : at;
    const edited = part.slice(0, digit) + (part[digit] === "9" ? "8" : String(Number(part[digit]) + 1)) + part.slice(digit + 1);
    const f = failure(() => kept([[r[0][0], edited, ...r[0].slice(2)]], newRows, OMITTED));
    expect(f.code).toBe("KEPT_DAMAGED");
    expect(f.message).toContain('kept model "crates"');
  });

  test("an edited header cell and damaged JSON are refused", () => {
    const r = row();
    expect(failure(() => kept([[(r[0][0] as string).replace("; parts", "; pieces"), ...r[0].slice(1)]], newRows, OMITTED)).code).toBe("KEPT_HEADER");
    const broken = keptRow(modelOf(binaryLabels, predictors), (t) => t.slice(0, -1));
    expect(failure(() => kept(broken, newRows, OMITTED)).code).toBe("DESCRIPTION_NOT_JSON");
  });

  test("missing arguments and a threshold for several classes", () => {
    expect(failure(() => kept(OMITTED, newRows, OMITTED)).code).toBe("EMPTY_RANGE");
    expect(failure(() => kept(row(), OMITTED, OMITTED)).code).toBe("EMPTY_RANGE");
    const multi = keptRow(modelOf(binLabels, predictors));
    expect(failure(() => kept(multi, newRows, [["threshold=0.3"]])).code).toBe("BAD_OPTION_VALUE");
    expect(failure(() => kept(multi, newRows, [["show=maybe"]])).code).toBe("BAD_OPTION_VALUE");
  });

  test("through the registry (as the preview workbench calls it) the same message arrives", () => {
    expect(() => evaluateCellFunction("ODDS.KEPT", [[["not a model"]], newRows])).toThrow(formatMessage("KEPT_NOT_FOUND", { argument: "model_cells", got: '"not a model"', sheet: KEPT_SHEET }));
  });
});

describe("output bounded by the sheet", () => {
  test("probabilities of 3 classes for more rows than one call can return are refused before scoring; one class column passes", () => {
    const multi = keptRow(modelOf(binLabels, predictors));
    const n = Math.ceil(MAX_OUTPUT_CELLS / 3) + 10;
    const rows: Range = [["weight", "grade", "waxed"], ...Array.from({ length: n }, (_, i) => [100 + (i % 50), "A", false] as CellValue[])];
    const f = failure(() => kept(multi, rows, OMITTED));
    expect(f.code).toBe("OUTPUT_TOO_LARGE");
    expect(f.message).toContain("ODDS.KEPT");
    const classes = kept(multi, rows, [["show=class"]]);
    expect(classes.length).toBe(n + 1);
    expect(classes[0]).toEqual(["predicted class"]);
  });
});
