/** The rule that decides where a table ends after rows were appended or deleted (tableExtent.ts). */
import { grownRowCount, isBlankRow } from "../../../src/taskpane/tableExtent";

describe("where a table ends", () => {
  test("null, undefined and empty text are blank; 0, FALSE and a space are not", () => {
    expect(isBlankRow([null, undefined as never, ""])).toBe(true);
    expect(isBlankRow([null, 0])).toBe(false);
    expect(isBlankRow([false])).toBe(false);
    expect(isBlankRow([" "])).toBe(false);
  });

  test("filled rows read below a filled last row continue the table until the first blank row", () => {
    expect(grownRowCount([["h"], [1], [2], [3], [null], [4]], 2)).toBe(4);
  });

  test("no rows below: the table keeps its rows", () => {
    expect(grownRowCount([["h"], [1], [2]], 3)).toBe(3);
  });

  test("blank rows at the bottom of the original block are dropped and stop the growth", () => {
    expect(grownRowCount([["h"], [1], [null], [5]], 3)).toBe(2);
  });

  test("a blank row inside the original block is kept", () => {
    expect(grownRowCount([["h"], [null], [2], [3]], 3)).toBe(4);
  });

  test("an all-blank table keeps one row", () => {
    expect(grownRowCount([[null], [null]], 2)).toBe(1);
  });
});
