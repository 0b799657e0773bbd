/**
 * The cell values Excel really sends, end to end through the cell functions: blanks as null or "",
 * the 0 some older desktop builds send for a blank, numbers typed as text, TRUE/FALSE labels, text
 * categories, and results with values that do not exist (aliased terms) — which must show as empty
 * cells, never as 0, NaN or #NUM!. References: R's glm on the Spector data and on the aliased
 * design of test/fixtures/binary/glm-references.json.
 */
import * as glm from "../../fixtures/binary/glm-references.json";
import * as spector from "../../fixtures/binary/spector.json";
import { formatMessage } from "../../../src/shared/messages";
import { basis, fit, prob } from "../../../src/functions/functions";
import { buildBasisColumns } from "../../../src/shared/basisColumns";
import { sharedFitCache } from "../../../src/shared/fitCache";
import { OMITTED, column, expectClose, expectCleanCells, failure, table } from "./excel";

/** See fit.test.ts. */
const R_TOLERANCE = 1e-7;

const d = spector.data;
const predictors = table({ GPA: d.GPA, TUCE: d.TUCE, PSI: d.PSI });

beforeEach(() => sharedFitCache().clear());

describe("what Excel sends", () => {
  test("TRUE/FALSE labels: TRUE is the positive class", () => {
    const out = fit(column("passed", d.GRADE.map((g) => g === 1)), predictors, OMITTED);
    expect(out[1][0]).toBe("TRUE");
    expectClose(out[2][2], glm.spector.coefficients[1], R_TOLERANCE, "GPA");
  });

  test("numbers typed as text count as numbers", () => {
    const asText = table({ GPA: d.GPA.map(String), TUCE: d.TUCE.map((v) => ` ${v} `), PSI: d.PSI });
    const out = fit(column("GRADE", d.GRADE.map(String)), asText, OMITTED);
    expectClose(out[2][2], glm.spector.coefficients[1], R_TOLERANCE, "GPA from text");
  });

  test('an empty text "" is a blank like null: the row is skipped the same way', () => {
    const withNull = prob(column("GRADE", [...d.GRADE, 1]), table({ GPA: [...d.GPA, null], TUCE: [...d.TUCE, 3], PSI: [...d.PSI, 1] }), OMITTED, OMITTED);
    const withEmpty = prob(column("GRADE", [...d.GRADE, 1]), table({ GPA: [...d.GPA, ""], TUCE: [...d.TUCE, 3], PSI: [...d.PSI, 1] }), OMITTED, OMITTED);
    expect(withEmpty).toEqual(withNull);
    expect(withNull[33]).toEqual([""]);
  });

  test("a 0 sent for a blank by an older build, among category names, is a blank", () => {
    const track = d.PSI.map((v, i) => (i === 3 ? 0 : v === 1 ? "new" : "old"));
    const out = fit(column("GRADE", d.GRADE), table({ GPA: d.GPA, TUCE: d.TUCE, track }), OMITTED);
    expect(out.some((r) => r[0] === formatMessage("ROWS_SKIPPED", { count: 1, detail: "track: 1" }))).toBe(true);
  });

  test("an omitted optional argument arrives as null and means the defaults", () => {
    const a = fit(column("GRADE", d.GRADE), predictors, OMITTED);
    const b = fit(column("GRADE", d.GRADE), predictors, [[null]]);
    const c = fit(column("GRADE", d.GRADE), predictors, [[""]]);
    expect(b).toEqual(a);
    expect(c).toEqual(a);
  });

  test("a lone cell passed where a range is expected works as a 1x1 range (options text)", () => {
    const out = fit(column("GRADE", d.GRADE), predictors, "level=0.9" as never);
    expect(out[0][6]).toBe("lower 90%");
  });
});

describe("values that do not exist show as empty cells", () => {
  test("an aliased column: its row is blank except its name, and the fit names it below", () => {
    const w = glm.weighted.data;
    const out = fit(
      column("y", w.map((r) => r.y)),
      table({ x1: w.map((r) => r.x1), x2: w.map((r) => r.x2), x3: w.map((r) => r.x3) }),
      OMITTED,
    );
    expectCleanCells(out);
    const ref = glm.weighted.aliased;
    for (let j = 0; j < 3; j++) expectClose(out[1 + j][2], ref.coefficients[j] as number, R_TOLERANCE, `coef ${j}`);
    expect(out[4].slice(1)).toEqual(["x3", "", "", "", "", "", "", "", "", ""]);
    expect(out.some((r) => typeof r[0] === "string" && r[0].includes('"x3"') && r[0].includes("dropped"))).toBe(true);
  });

  test("no cell of any result is null, undefined, NaN or infinite (separated data with Firth)", () => {
    const x = [0, 0, 0, 1, 1, 1];
    expectCleanCells(fit(column("y", x), column("x", x), [["firth=true"]]));
    expectCleanCells(prob(column("y", x), column("x", x), OMITTED, [["firth=true"]]));
  });
});

describe("ODDS.BASIS through the cell function", () => {
  test("gives buildBasisColumns's result (the basis engineer's adapter) for a z-score recipe", () => {
    const data = column("age", [30, 40, 50]);
    expect(basis(data, [["age: z"]], OMITTED)).toEqual(buildBasisColumns(data, [["age: z"]], null));
    const out = basis(data, [["age: z"]], OMITTED);
    expectClose(out[1][0], -1, 1e-15, "z of 30");
  });

  test("a whole-column data range is #VALUE! RANGE_TOO_LARGE", () => {
    const whole = Array.from({ length: 1_048_576 }, (_, i) => [i === 0 ? "age" : i < 50 ? i : null]);
    const f = failure(() => basis(whole, [["age: z"]], OMITTED));
    expect(f.code).toBe("RANGE_TOO_LARGE");
    expect(f.message).toBe(formatMessage("RANGE_TOO_LARGE", { argument: "data", cells: "1,048,576", limit: "about 5 MB per call" }));
  });
});
