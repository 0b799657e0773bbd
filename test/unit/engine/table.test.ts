import { detectHeader, parseNumericText, readTable, type NumericColumn, type TextColumn } from "../../../src/engine/data/table";
import type { CellValue } from "../../../src/engine/types";
import { caught } from "../../support/caught";


const read = (cells: CellValue[][], headers: "auto" | "yes" | "no" = "auto") =>
  readTable(cells, { argument: "predictors", headers });

describe("readTable: blanks", () => {
  test("null, undefined, empty text and whitespace-only text are all missing", () => {
    const t = read([[1], [null], [undefined], [""], ["   "], [2]], "no");
    const c = t.columns[0] as NumericColumn;
    expect(c.kind).toBe("number");
    expect(Array.from(c.missing)).toEqual([0, 1, 1, 1, 1, 0]);
    expect(Number.isNaN(c.values[1])).toBe(true);
    expect(c.values[5]).toBe(2);
  });

  test("trailing entirely blank rows are trimmed, blank rows inside the data are kept", () => {
    const t = read([[1, "a"], [null, null], [3, "b"], [null, ""], ["", null]], "no");
    expect(t.rows).toBe(3);
    expect(t.trimmedRows).toBe(2);
    expect(Array.from(t.columns[0].missing)).toEqual([0, 1, 0]);
  });

  test("a whole-column reference (a million rows, almost all blank) is trimmed to its data rows", () => {
    const rows: CellValue[][] = new Array(1_048_576);
    for (let i = 0; i < rows.length; i++) rows[i] = [i < 100 ? i : null, i < 100 ? "x" + (i % 3) : null];
    rows[0] = ["dose", "group"];
    const t = read(rows);
    expect(t.rows).toBe(99);
    expect(t.header).toBe(true);
  });

  test("a range with no values at all is EMPTY_RANGE", () => {
    const e = caught(() => read([[null, ""], [" ", null]]));
    expect(e.code).toBe("EMPTY_RANGE");
    expect(e.message).toBe("The predictors range has no data. Select a range that holds at least one row of values.");
  });

  test("a range that holds only a header is EMPTY_RANGE", () => {
    const e = caught(() => read([["age", "region"]], "yes"));
    expect(e.code).toBe("EMPTY_RANGE");
  });

  test("the 0 an older build sends for a blank is a real 0 in a numeric column", () => {
    const c = read([[0], [1], [0]], "no").columns[0] as NumericColumn;
    expect(c.kind).toBe("number");
    expect(Array.from(c.values)).toEqual([0, 1, 0]);
    expect(Array.from(c.missing)).toEqual([0, 0, 0]);
  });

  test("a numeric 0 in a column that is otherwise category text is a blank sent as 0", () => {
    const c = read([["North"], [0], ["South"], ["North"]], "no").columns[0] as TextColumn;
    expect(c.kind).toBe("text");
    expect(c.values).toEqual(["North", "", "South", "North"]);
    expect(Array.from(c.missing)).toEqual([0, 1, 0, 0]);
  });

  test("the text \"0\" among categories was typed and stays a category", () => {
    const c = read([["North"], ["0"], ["South"]], "no").columns[0] as TextColumn;
    expect(c.values).toEqual(["North", "0", "South"]);
    expect(Array.from(c.missing)).toEqual([0, 0, 0]);
  });
});

describe("readTable: numbers stored as text", () => {
  test.each([
    ["1.5", 1.5],
    [" 2 ", 2],
    ["1e-3", 0.001],
    ["-.5", -0.5],
    ["+4", 4],
    ["1.", 1],
    ["2E+2", 200],
  ])("%p is the number %p", (text, value) => {
    expect(parseNumericText(text)).toBe(value);
  });

  test.each(["1,234", "1 234", "12%", "$3", "0x1F", "NaN", "Infinity", "1.2.3", "e5", "-", "."])(
    "%p is not a number (no locale or format guessing)",
    (text) => {
      expect(Number.isNaN(parseNumericText(text))).toBe(true);
    },
  );

  test("a column of numeric text is a number column", () => {
    const c = read([["1.5"], [" 2 "], ["1e-3"], ["-.5"]], "no").columns[0] as NumericColumn;
    expect(c.kind).toBe("number");
    expect(Array.from(c.values)).toEqual([1.5, 2, 0.001, -0.5]);
  });

  test("one word among many numbers is NOT_A_NUMBER at its 1-based position in the range", () => {
    const e = caught(() => read([["age", "dose"], [31, 1], [40, "1,234"], [52, 3]]));
    expect(e.code).toBe("NOT_A_NUMBER");
    expect(e.message).toBe(
      'The predictors value in row 3, column 2 ("1,234") is not a number. Enter a number or clear the cell.',
    );
  });

  test("a column with at least as many words as numbers is a category column; numbers become text", () => {
    const c = read([["A"], [3], ["B"], ["3"]], "no").columns[0] as TextColumn;
    expect(c.kind).toBe("text");
    expect(c.values).toEqual(["A", "3", "B", "3"]);
  });

  test.each([
    [NaN, "NaN"],
    [Infinity, "Infinity"],
    [-Infinity, "-Infinity"],
  ])("a %p arriving as a number is NOT_FINITE_VALUE with its position", (bad, shown) => {
    const e = caught(() => read([[1, 2], [3, bad]], "no"));
    expect(e.code).toBe("NOT_FINITE_VALUE");
    expect(e.message).toBe(
      `The predictors value in row 2, column 2 is ${shown}, which is not a finite number. Enter a finite number or clear the cell.`,
    );
  });
});

describe("readTable: booleans and text", () => {
  test("a column of only booleans has kind boolean with values 1 and 0", () => {
    const c = read([[true], [false], [null], [true]], "no").columns[0] as NumericColumn;
    expect(c.kind).toBe("boolean");
    expect(Array.from(c.values.subarray(0, 2))).toEqual([1, 0]);
    expect(Array.from(c.missing)).toEqual([0, 0, 1, 0]);
  });

  test("booleans among numbers count as 1 and 0 in a number column", () => {
    const c = read([[2], [true], [false]], "no").columns[0] as NumericColumn;
    expect(c.kind).toBe("number");
    expect(Array.from(c.values)).toEqual([2, 1, 0]);
  });

  test("booleans among words become the text TRUE and FALSE", () => {
    const c = read([["maybe"], [true], [false], ["maybe"]], "no").columns[0] as TextColumn;
    expect(c.values).toEqual(["maybe", "TRUE", "FALSE", "maybe"]);
  });

  test("text is trimmed but keeps its case", () => {
    const c = read([[" North "], ["north"], ["North"]], "no").columns[0] as TextColumn;
    expect(c.values).toEqual(["North", "north", "North"]);
  });

  test("an entirely blank column has kind empty", () => {
    const t = read([[1, null], [2, ""]], "no");
    expect(t.columns[1].kind).toBe("empty");
  });
});

describe("readTable: header row", () => {
  test("text over numbers is a header (strong evidence)", () => {
    const t = read([["age", "smoker"], [31, true], [40, false]]);
    expect(t.header).toBe(true);
    expect(t.headerEvidence).toBe("strong");
    expect(t.names).toEqual(["age", "smoker"]);
    expect(t.rows).toBe(2);
    expect(t.firstRow).toBe(2);
  });

  test("a number or boolean in the first row means there is no header", () => {
    const t = read([["North", 31], ["South", 40]]);
    expect(t.header).toBe(false);
    expect(t.names).toEqual(["x1", "x2"]);
    expect(t.firstRow).toBe(1);
  });

  test("in a text column, a first cell that recurs below is a value, not a name", () => {
    const t = read([["yes"], ["no"], ["yes"]]);
    expect(t.header).toBe(false);
    expect(t.rows).toBe(3);
  });

  test("in a text column, a first cell that never recurs below is a name (weak evidence)", () => {
    const t = read([["outcome"], ["no"], ["yes"], ["no"]]);
    expect(t.header).toBe(true);
    expect(t.headerEvidence).toBe("weak");
    expect(t.names).toEqual(["outcome"]);
  });

  test("a recurring first cell in any text column makes the first row data, even beside a column of numbers under a name", () => {
    // Column 1 alone is strong evidence for a header; column 2's "red" recurs, so the row is data.
    expect(detectHeader([["size", "red"], [1, "blue"], [2, "red"]])).toEqual({ header: false, evidence: "weak" });
    expect(detectHeader([["red", "size"], ["blue", 1], ["red", 2]])).toEqual({ header: false, evidence: "weak" });
  });

  test("names over numbers and over non-recurring text: a header with strong evidence", () => {
    expect(detectHeader([["size", "colour"], [1, "blue"], [2, "red"]])).toEqual({ header: true, evidence: "strong" });
  });

  test("a name over a column of blanks only is no evidence of its own (weak, from the other columns)", () => {
    expect(detectHeader([["note", "colour"], [null, "blue"], ["", "red"]])).toEqual({ header: true, evidence: "weak" });
  });

  test("numbers stored as text count as numbers under a name; a name matching after trimming recurs", () => {
    expect(detectHeader([["size"], [" 1.5 "], ["2"]])).toEqual({ header: true, evidence: "strong" });
    expect(detectHeader([["red"], ["blue"], ["  red "]])).toEqual({ header: false, evidence: "weak" });
  });

  test("a single row is never a header under auto", () => {
    expect(detectHeader([["a", "b"]])).toEqual({ header: false, evidence: "none" });
  });

  test("headers=no keeps a text first row as data; headers=yes takes a numeric first row as names", () => {
    expect(read([["age"], [31]], "no").rows).toBe(2);
    const t = read([[2020, 2021], [1, 2]], "yes");
    expect(t.names).toEqual(["2020", "2021"]);
    expect(t.rows).toBe(1);
  });

  test("blank header cells get generated names and repeated names are numbered", () => {
    const t = read([["dose", null, "dose"], [1, 2, 3], [4, 5, 6]], "yes");
    expect(t.names).toEqual(["dose", "x2", "dose (2)"]);
  });

  test("a custom prefix names columns without a header", () => {
    const t = readTable([[1], [2]], { argument: "labels", headers: "no", namePrefix: "label" });
    expect(t.names).toEqual(["label1"]);
  });
});

describe("readTable: shape", () => {
  test("a ragged array is RAGGED_RANGE naming the first short row", () => {
    const e = caught(() => read([[1, 2], [3, 4], [5]]));
    expect(e.code).toBe("RAGGED_RANGE");
    expect(e.message).toBe(
      "Row 3 of the predictors range has 1 cell but row 1 has 2. Pass a rectangular range.",
    );
  });

  test("a lone scalar is a one-cell range", () => {
    const t = readTable(5 as unknown as CellValue[][], { argument: "x" });
    expect(t.rows).toBe(1);
    expect((t.columns[0] as NumericColumn).values[0]).toBe(5);
  });
});
