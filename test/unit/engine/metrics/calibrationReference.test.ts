/**
 * Calibration table and Hosmer-Lemeshow statistic against R (fixture
 * test/fixtures/metrics/calibration.json, written by calibration.R next to it, seed 20261201).
 * No packaged Hosmer-Lemeshow implementation exists in Debian, so the R script computes it by hand
 * with the same grouping rule (inverse-ECDF quantile cuts, unique, cut(include.lowest = TRUE)),
 * expanding integer weights into repeated rows. Published method: Hosmer & Lemeshow (1980).
 */
import fixture from "../../../fixtures/metrics/calibration.json";
import { calibrationTable, hosmerLemeshow } from "../../../../src/engine/metrics";
import { expectAllClose, expectClose, expectProblem, f64 } from "./close";

/** R wrote 15 significant digits; sums of up to 1,500 terms. */
const R_REL_TOL = 1e-11;
/** p-values: ours (A&S continued fraction) against R's pchisq, plus the statistic's rounding. */
const P_VALUE_REL_TOL = 1e-9;

const labels = f64(fixture.labels);
const weights = f64(fixture.weights);

interface HlRef {
  groups: number;
  statistic: number;
  df: number;
  p: number;
  table: { count: number[]; lower: number[]; upper: number[]; observed: number[]; expected: number[] };
}

function expectMatches(got: ReturnType<typeof hosmerLemeshow>, ref: HlRef, countsAreWeights: boolean): void {
  expect(got.groupCount).toBe(ref.groups);
  expect(got.df).toBe(ref.df);
  const counts = got.groups.map((g) => (countsAreWeights ? g.weight : g.rows));
  expect(counts).toEqual(ref.table.count);
  expectAllClose(got.groups.map((g) => g.lower), ref.table.lower, R_REL_TOL, "lower");
  expectAllClose(got.groups.map((g) => g.upper), ref.table.upper, R_REL_TOL, "upper");
  expectAllClose(got.groups.map((g) => g.observed), ref.table.observed, R_REL_TOL, "observed");
  expectAllClose(got.groups.map((g) => g.expected), ref.table.expected, R_REL_TOL, "expected");
  expectClose(got.statistic, ref.statistic, R_REL_TOL, "statistic");
  expectClose(got.p, ref.p, P_VALUE_REL_TOL, "p");
}

test("deciles of a model fitted to the same 500 rows: table, statistic 10.22 on 8 df and p match R", () => {
  expectMatches(hosmerLemeshow(labels, f64(fixture.development.probabilities)), fixture.development.hl10, false);
});

test("an external model with tied (2-decimal) probabilities: ties stay in one group and the result matches R", () => {
  const p = f64(fixture.external.probabilities);
  const got = hosmerLemeshow(labels, p);
  expectMatches(got, fixture.external.hl10, false);
  // no value appears in two groups
  for (let r = 1; r < got.groups.length; r++) expect(got.groups[r].lower).toBeGreaterThan(got.groups[r - 1].upper);
});

test("sample = 'external' keeps all G degrees of freedom (Hosmer, Lemeshow & Sturdivant 2013, 5.2.2)", () => {
  const got = hosmerLemeshow(labels, f64(fixture.external.probabilities), { sample: "external" });
  expectMatches(got, fixture.external.hl10External, false);
  expect(got.df).toBe(10);
});

test("five groups instead of ten match R with the same rule", () => {
  expectMatches(hosmerLemeshow(labels, f64(fixture.external.probabilities), { groups: 5 }), fixture.external.hl5, false);
});

test("integer case weights give the result of repeating rows (R on the expanded data)", () => {
  const got = hosmerLemeshow(labels, f64(fixture.weighted.probabilities), { weights });
  expectMatches(got, fixture.weighted.hl10, true);
});

test("few distinct probabilities: coinciding cuts merge, leaving 4 groups and 2 df as in R", () => {
  const got = hosmerLemeshow(labels, f64(fixture.fewValues.probabilities));
  expectMatches(got, fixture.fewValues.hl10, false);
});

test("three distinct probabilities form only 2 groups: Hosmer-Lemeshow refuses with TOO_FEW_CALIBRATION_GROUPS", () => {
  expect(fixture.threeValues.hl10.groups).toBe(2);
  const table = calibrationTable(labels, f64(fixture.threeValues.probabilities));
  expect(table.groups.map((g) => g.rows)).toEqual(fixture.threeValues.hl10.table.count);
  const e = expectProblem(() => hosmerLemeshow(labels, f64(fixture.threeValues.probabilities)), "TOO_FEW_CALIBRATION_GROUPS");
  expect(e.message).toContain("only 2 groups (of 10 requested)");
});

test("the table states its grouping rule", () => {
  const t = calibrationTable(labels, f64(fixture.external.probabilities));
  expect(t.rule).toMatch(/type-1/);
  expect(t.rule).toMatch(/Tied probabilities always stay in the same group/);
});
