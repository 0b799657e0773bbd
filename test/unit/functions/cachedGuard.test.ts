/**
 * The payload guard with the fit cache: a cached model's inputs keep their size estimate, and a
 * cached fit never lets an oversized call through.
 */
import { OddsmithError } from "../../../src/shared/messages";
import { fitCell } from "../../../src/functions/fitCell";
import { modelCache } from "../../../src/shared/fitService";
import { PAYLOAD_LIMIT_BYTES, checkPayload, estimateBytes } from "../../../src/shared/payload";
import { probCell } from "../../../src/functions/predictCells";

const labels = [["y"], ...Array.from({ length: 40 }, (_, i) => [i % 3 === 0 ? "yes" : "no"])];
const predictors = [["x"], ...Array.from({ length: 40 }, (_, i) => [Math.sin(i) * 3 + (i % 3 === 0 ? 1 : 0)])];

function codeOf(f: () => unknown): string {
  try {
    f();
  } catch (e) {
    if (e instanceof OddsmithError) return e.code;
    throw e;
  }
  return "none";
}

beforeEach(() => modelCache().clear());

describe("payload guard and the fit cache", () => {
  test("a known estimate is used instead of reading the cells again", () => {
    // Long text forces the exact estimate; the part's known size (over the limit) decides.
    const cells = [["a".repeat(40)]];
    expect(codeOf(() => checkPayload([{ argument: "data", cells, bytes: PAYLOAD_LIMIT_BYTES + 1 }]))).toBe("RANGE_TOO_LARGE");
    expect(codeOf(() => checkPayload([{ argument: "data", cells }]))).toBe("none");
  });

  test("an estimate the guard computes is written back to the part", () => {
    const part: { argument: string; cells: unknown; bytes?: number } = { argument: "data", cells: [["b".repeat(40), 0.1]] };
    checkPayload([part]);
    expect(part.bytes).toBe(estimateBytes(part.cells));
  });

  test("the same call gives the same table whether the fit was cached or not", () => {
    const cold = fitCell(labels, predictors, null);
    const warm = fitCell(labels, predictors, null);
    expect(warm).toEqual(cold);
    expect(modelCache().stats().hits).toBe(1);
  });

  test("a cached fit does not let an oversized scoring call through (RANGE_TOO_LARGE)", () => {
    fitCell(labels, predictors, null);
    // Inputs plus output over 5 MB while the output alone (one value per row) fits the sheet.
    const huge = Array.from({ length: 200_000 }, () => [0.5, 0.5, 0.5]);
    expect(codeOf(() => probCell(labels, predictors, huge, null))).toBe("RANGE_TOO_LARGE");
  });
});
