/**
 * A trained model keeps its training rows encoded for scoring. For numeric predictors they are taken
 * from the parsed table, and when every row entered the fit from the fitted design, rather than by
 * encoding the cells again; the result must be exactly what
 * encodeRows gives on the same cells (values, NaN rows, per-row problems, header, first row).
 */
import fc from "fast-check";
import { encodeRows, type EncodedRows } from "../../../src/engine/data/design";
import { trainModel } from "../../../src/engine/model";
import type { CellValue } from "../../../src/engine/types";

function comparable(e: EncodedRows, rows: number) {
  return {
    columns: e.design.columns.map((c) => Array.from(c.subarray(0, rows))),
    ok: Array.from(e.ok.subarray(0, rows)),
    problems: e.problems.filter((p) => p.index < rows),
    names: e.design.names,
    header: e.header,
    firstRow: e.firstRow,
  };
}

function expectSameAsEncodeRows(labels: CellValue[][], predictors: CellValue[][], headers: "yes" | "no") {
  const m = trainModel(labels, predictors, { headers });
  const ref = encodeRows(m.encoding, predictors, { argument: "predictors", headers: m.header ? "yes" : "no" });
  expect(comparable(m.trainingRows, ref.design.rows)).toEqual(comparable(ref, ref.design.rows));
  expect(m.trainingRows.design.rows).toBe(m.rows);
}

const labels = (n: number, header: boolean): CellValue[][] => [
  ...(header ? [["y"]] : []),
  ...Array.from({ length: n }, (_, i) => [i % 3 === 0 ? "a" : "b"]),
];

describe("training rows kept for scoring equal encodeRows on the training cells", () => {
  test("numbers with blanks: the blank row is NaN with MISSING_FOR_SCORING naming its first blank column", () => {
    const p: CellValue[][] = [["u", "v"], [1, 2], [null, " "], [3, 4], [5, 1.5], [2, null], [0, 7], [8, 1]];
    expectSameAsEncodeRows(labels(7, true), p, "yes");
  });

  test("booleans and numbers stored as text read as in encodeRows", () => {
    const p: CellValue[][] = [["u", "flag"], [" 1.5 ", true], [2, false], ["-.5", true], [4, false], [1e-3, true], [6, true]];
    expectSameAsEncodeRows(labels(6, true), p, "yes");
  });

  test("predictors ending before the labels: rows past their end are missing", () => {
    const p: CellValue[][] = [[1, 2], [2, 1], [3, 5], [4, 2], [5, 3], [6, 1], [null, null], [null, null]];
    expectSameAsEncodeRows(labels(8, false), p, "no");
  });

  test("repeated and blank header names (columns then matched by position)", () => {
    const p: CellValue[][] = [["a", "a", ""], [1, 2, 3], [2, 1, 0], [3, 5, 1], [4, 2, 2], [5, 3, 1], [6, 1, 4]];
    expectSameAsEncodeRows(labels(6, true), p, "yes");
  });

  test("an entirely blank column is left out", () => {
    const p: CellValue[][] = [["u", "gone"], [1, null], [2, null], [3, ""], [4, null], [0, null], [7, null]];
    expectSameAsEncodeRows(labels(6, true), p, "yes");
  });

  test("text categories (encoded from the cells) agree too", () => {
    const p: CellValue[][] = [["u", "region"], [1, "N"], [2, "S"], [3, "N"], [4, null], [5, "S"], [6, "N"], [7, "S"]];
    expectSameAsEncodeRows(labels(7, true), p, "yes");
  });

  test("text categories with every row used (taken from the fitted design) agree, numbers in a text column included", () => {
    const p: CellValue[][] = [["u", "region", "size"], [1, "N", "big"], [2, " S ", "small"], [3, "N", 3], [4, "E", "big"], [5, "S", "small"], [6, "N", "big"], [7, "E", 3]];
    expectSameAsEncodeRows(labels(7, true), p, "yes");
    const m = trainModel(labels(7, true), p, { headers: "yes" });
    expect(m.skipped.total).toBe(0);
  });

  test("text categories without a header row, every row used", () => {
    const p: CellValue[][] = [[1, "N"], [2, "S"], [3, "N"], [4, "E"], [5, "S"], [6, "N"], [7, "E"]];
    expectSameAsEncodeRows(labels(7, false), p, "no");
  });

  test("text categories under repeated header names (columns then matched by position)", () => {
    const p: CellValue[][] = [["g", "g"], ["a", "x"], ["b", "y"], ["a", "y"], ["b", "x"], ["a", "x"], ["b", "y"]];
    expectSameAsEncodeRows(labels(6, true), p, "yes");
  });

  test("text categories with a row skipped for a missing label", () => {
    const y: CellValue[][] = [["y"], ["a"], ["b"], [null], ["a"], ["b"], ["a"], ["b"]];
    const p: CellValue[][] = [["u", "region"], [1, "N"], [2, "S"], [3, "W"], [4, "N"], [5, "S"], [6, "N"], [7, "S"]];
    expectSameAsEncodeRows(y, p, "yes");
  });

  test("random numeric sheets with blanks, booleans and numeric text", () => {
    const cell = fc.oneof(
      { weight: 6, arbitrary: fc.double({ min: -5, max: 5, noNaN: true }) },
      { weight: 1, arbitrary: fc.constantFrom<CellValue>(null, "", " ", true, false, "2", " -1.5 ") },
    );
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 4 }), fc.array(fc.array(cell, { minLength: 4, maxLength: 4 }), { minLength: 12, maxLength: 30 }), (w, raw) => {
        const p: CellValue[][] = [Array.from({ length: w }, (_, j) => `c${j}`), ...raw.map((r) => r.slice(0, w))];
        let m;
        try {
          m = trainModel(labels(raw.length, true), p, { headers: "yes" });
        } catch {
          return true; // inputs the model refuses (e.g. no usable rows) have no training rows
        }
        const ref = encodeRows(m.encoding, p, { argument: "predictors", headers: "yes" });
        expect(comparable(m.trainingRows, ref.design.rows)).toEqual(comparable(ref, ref.design.rows));
        return true;
      }),
      { numRuns: 200 },
    );
  });
});
