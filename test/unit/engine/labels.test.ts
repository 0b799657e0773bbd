import { compareText, readLabels, matchClass } from "../../../src/engine/data/labels";
import { OddsmithError } from "../../../src/engine/messages";
import { readTable } from "../../../src/engine/data/table";
import type { CellValue } from "../../../src/engine/types";
import { caught } from "../../support/caught";


const column = (values: CellValue[]) =>
  readTable(
    values.map((v) => [v]),
    { argument: "labels", headers: "no", namePrefix: "label" },
  ).columns[0];

describe("readLabels: binary default positive class", () => {
  test("0/1 numbers: the positive class is 1", () => {
    const l = readLabels(column([0, 1, 1, 0]));
    expect(l.kind).toBe("binary");
    expect(l.classes).toEqual(["0", "1"]);
    expect(l.positiveClass).toBe("1");
    expect(Array.from(l.codes)).toEqual([0, 1, 1, 0]);
    expect(l.counts).toEqual([2, 2]);
  });

  test("TRUE/FALSE booleans: the positive class is TRUE", () => {
    const l = readLabels(column([true, false, false]));
    expect(l.classes).toEqual(["FALSE", "TRUE"]);
    expect(l.positiveClass).toBe("TRUE");
    expect(l.source).toBe("boolean");
  });

  test("yes/no text in any case: the positive class is the yes member", () => {
    expect(readLabels(column(["no", "yes", "no"])).positiveClass).toBe("yes");
    expect(readLabels(column(["No", "Yes"])).positiveClass).toBe("Yes");
    expect(readLabels(column(["N", "Y"])).positiveClass).toBe("Y");
  });

  test("other pairs: the second class in sorted order, named in the result", () => {
    const l = readLabels(column(["spam", "ham", "spam"]));
    expect(l.classes).toEqual(["ham", "spam"]);
    expect(l.positiveClass).toBe("spam");
  });

  test("numbers sort by value, not as text (9 before 10)", () => {
    const l = readLabels(column([10, 9, 10]));
    expect(l.classes).toEqual(["9", "10"]);
    expect(l.positiveClass).toBe("10");
  });

  test("a named positive class overrides the default and is matched case-insensitively", () => {
    const l = readLabels(column(["spam", "ham", "spam"]), { positive: "HAM" });
    expect(l.classes).toEqual(["spam", "ham"]);
    expect(l.positiveClass).toBe("ham");
    expect(Array.from(l.codes)).toEqual([0, 1, 0]);
  });

  test("a named positive class matches numeric labels by value (\"0.0\" names 0)", () => {
    expect(readLabels(column([0, 1]), { positive: "0.0" }).positiveClass).toBe("0");
  });

  test("booleans answer to yes/no when named", () => {
    expect(readLabels(column([true, false]), { positive: "no" }).positiveClass).toBe("FALSE");
  });
});

describe("readLabels: multi-class", () => {
  test("three or more classes: sorted, the reference is the first by default", () => {
    const l = readLabels(column(["b", "C", "a", "b"]));
    expect(l.kind).toBe("multiclass");
    expect(l.classes).toEqual(["a", "b", "C"]);
    expect(l.referenceClass).toBe("a");
    expect(l.referenceIndex).toBe(0);
    expect(Array.from(l.codes)).toEqual([1, 2, 0, 1]);
  });

  test("a named reference class is used and its index given", () => {
    const l = readLabels(column(["b", "c", "a"]), { reference: "c" });
    expect(l.referenceClass).toBe("c");
    expect(l.referenceIndex).toBe(2);
  });

  test("up to 10 whole-number classes are classes", () => {
    const l = readLabels(column([1, 2, 3, 4, 5, 6, 7, 8, 9, 10]));
    expect(l.classes.length).toBe(10);
  });
});

describe("readLabels: problems", () => {
  test("one class only is ONE_CLASS_ONLY naming it", () => {
    const e = caught(() => readLabels(column(["yes", "yes", null])));
    expect(e.code).toBe("ONE_CLASS_ONLY");
    expect(e.message).toBe(
      'Every usable row has the label "yes". A classifier needs at least two classes in the label column.',
    );
  });

  test("classes are counted among usable rows only", () => {
    const e = caught(() => readLabels(column(["yes", "no", "yes"]), { use: Uint8Array.from([1, 0, 1]) }));
    expect(e.code).toBe("ONE_CLASS_ONLY");
  });

  test("more than 10 distinct numbers is TOO_MANY_CLASSES", () => {
    const e = caught(() => readLabels(column([1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11])));
    expect(e.code).toBe("TOO_MANY_CLASSES");
    expect(e.message).toBe(
      "The label column has 11 distinct values across 11 rows, which looks like a measurement rather than classes. Point the labels argument at the class column, or group the values into classes first.",
    );
  });

  test("more than two distinct numbers with a fraction is TOO_MANY_CLASSES", () => {
    const e = caught(() => readLabels(column([1.5, 2, 3, 2])));
    expect(e.code).toBe("TOO_MANY_CLASSES");
    expect(e.message).toContain("has 3 distinct values across 4 rows");
  });

  test("more than 50 distinct text labels (an identifier column) is TOO_MANY_LABELS", () => {
    const ids = Array.from({ length: 51 }, (_, i) => `id${i}`);
    const e = caught(() => readLabels(column(ids)));
    expect(e.code).toBe("TOO_MANY_LABELS");
    expect(e.message).toBe(
      "The label column has 51 different labels across 51 rows, more than the 50 classes a classifier here can fit. Point the labels argument at the class column (not an identifier or free-text column), or group the labels into at most 50 classes first.",
    );
  });

  test("50 distinct text labels are still classes", () => {
    const ids = Array.from({ length: 50 }, (_, i) => `c${i}`);
    expect(readLabels(column(ids)).classes.length).toBe(50);
  });

  test("two distinct numbers, even fractions, are a binary label", () => {
    expect(readLabels(column([0.5, 1.5, 0.5])).classes).toEqual(["0.5", "1.5"]);
  });

  test("a named positive class that does not occur is CLASS_NOT_FOUND listing the classes", () => {
    const e = caught(() => readLabels(column(["spam", "ham"]), { positive: "eggs" }));
    expect(e.code).toBe("CLASS_NOT_FOUND");
    expect(e.message).toBe(
      'The positive class "eggs" does not occur in the label column. Classes found: "ham" and "spam".',
    );
  });

  test("a named reference class that does not occur is CLASS_NOT_FOUND", () => {
    const e = caught(() => readLabels(column(["a", "b", "c"]), { reference: "d" }));
    expect(e.message).toBe(
      'The reference class "d" does not occur in the label column. Classes found: "a", "b" and "c".',
    );
  });

  test("an ambiguous case-insensitive name is CLASS_NOT_FOUND", () => {
    expect(() => matchClass(["Yes", "yes", "no"], "YES", "text", "positive")).toThrow(OddsmithError);
  });
});

describe("compareText", () => {
  test("orders case-insensitively and breaks ties by code unit", () => {
    expect(["b", "B", "a", "C"].sort(compareText)).toEqual(["a", "B", "b", "C"]);
  });
});
