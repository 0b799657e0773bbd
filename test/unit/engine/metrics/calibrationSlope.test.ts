/**
 * Calibration intercept and slope against R's glm (fixture test/fixtures/metrics/calibration.json,
 * written by calibration.R next to it): slope from glm(y ~ qlogis(p), binomial), calibration-in-the-
 * large from glm(y ~ 1, offset = qlogis(p), binomial), Wald 95% intervals. Method: Cox (1958).
 */
import fixture from "../../../fixtures/metrics/calibration.json";
import { calibrationSlope } from "../../../../src/engine/metrics";
import { expectClose, expectProblem, f64 } from "./close";

/**
 * The R script iterates glm to epsilon = 1e-14, so its estimates AND standard errors are the
 * converged ones (with the default 1e-8, glm's SEs use the working weights of the step before its
 * final estimate and differ by up to 4e-6 relative). Measured agreement: estimates 2e-11, standard
 * errors 1e-12 except the weighted offset model's (7e-9 relative: the two fitters stop at slightly
 * different points of a flat likelihood).
 */
const GLM_REL_TOL = 1e-8;

const labels = f64(fixture.labels);

interface SlopeRef {
  slope: number;
  slopeSE: number;
  slopeCI95: number[];
  interceptWithSlope: number;
  interceptWithSlopeSE: number;
  intercept: number;
  interceptSE: number;
  interceptCI95: number[];
}

function expectMatches(r: ReturnType<typeof calibrationSlope>, ref: SlopeRef): void {
  expectClose(r.slope.estimate, ref.slope, GLM_REL_TOL, "slope");
  expectClose(r.slope.standardError, ref.slopeSE, GLM_REL_TOL, "slope SE");
  expectClose(r.slope.lower, ref.slopeCI95[0], GLM_REL_TOL, "slope lower");
  expectClose(r.slope.upper, ref.slopeCI95[1], GLM_REL_TOL, "slope upper");
  expectClose(r.interceptWithSlope.estimate, ref.interceptWithSlope, GLM_REL_TOL, "intercept of slope model");
  expectClose(r.interceptWithSlope.standardError, ref.interceptWithSlopeSE, GLM_REL_TOL, "its SE");
  expectClose(r.intercept.estimate, ref.intercept, GLM_REL_TOL, "calibration-in-the-large");
  expectClose(r.intercept.standardError, ref.interceptSE, GLM_REL_TOL, "its SE");
  expectClose(r.intercept.lower, ref.interceptCI95[0], GLM_REL_TOL, "its lower end");
  expectClose(r.intercept.upper, ref.interceptCI95[1], GLM_REL_TOL, "its upper end");
}

test("in-sample fitted probabilities of a logistic model have slope 1 and intercept 0, as in R", () => {
  const r = calibrationSlope(labels, f64(fixture.development.probabilities));
  expectMatches(r, fixture.development.calibration);
  expect(r.diagnostics).toEqual([]);
});

test("an external, too-flat model: slope 1.22 and calibration-in-the-large -0.145 match R's glm", () => {
  expectMatches(calibrationSlope(labels, f64(fixture.external.probabilities)), fixture.external.calibration);
});

test("case weights act as frequency weights, as glm(weights = w)", () => {
  const r = calibrationSlope(labels, f64(fixture.weighted.probabilities), { weights: f64(fixture.weights) });
  expectMatches(r, fixture.weighted.calibration);
});

test("constant probabilities: slope not estimable (CONSTANT_PROBABILITIES), calibration-in-the-large still given", () => {
  // offset model with constant logit(0.25): a = logit(observed rate) - logit(0.25) = logit(0.5) - logit(0.25) = ln 3
  const r = calibrationSlope(f64([1, 0, 1, 0]), f64([0.25, 0.25, 0.25, 0.25]));
  expect(r.slope.estimate).toBeNaN();
  expect(r.diagnostics.map((d) => [d.code, d.severity])).toEqual([["CONSTANT_PROBABILITIES", "error"]]);
  expectClose(r.intercept.estimate, Math.log(3), 1e-9, "calibration-in-the-large");
});

test("probabilities exactly 0 and 1 are clipped before the logit, with a warning", () => {
  const r = calibrationSlope(f64([0, 1, 0, 1, 1, 0]), f64([0, 0.3, 0.4, 0.6, 1, 0.5]));
  expect(r.clippedRows).toBe(2);
  expect(r.diagnostics[0].code).toBe("PROBABILITIES_CLIPPED");
  expect(Number.isFinite(r.intercept.estimate)).toBe(true);
});

test("probabilities that rank the labels perfectly: slope NaN (unbounded) with CALIBRATION_SLOPE_UNBOUNDED, never a huge number", () => {
  const r = calibrationSlope(f64([0, 0, 0, 1, 1, 1]), f64([0.1, 0.2, 0.3, 0.6, 0.7, 0.8]));
  expect(r.slope.estimate).toBeNaN();
  expect(r.slope.standardError).toBeNaN();
  expect(r.diagnostics.map((d) => [d.code, d.severity])).toEqual([["CALIBRATION_SLOPE_UNBOUNDED", "error"]]);
  // calibration-in-the-large is still defined: sum of p = 2.7 vs 3 positives, so a > 0
  expect(r.intercept.estimate).toBeGreaterThan(0);
});

test("a tie between the highest negative and the lowest positive (quasi-separation) is unbounded too", () => {
  const r = calibrationSlope(f64([0, 0, 0, 1, 1, 1]), f64([0.1, 0.2, 0.5, 0.5, 0.7, 0.8]));
  expect(r.slope.estimate).toBeNaN();
  expect(r.diagnostics.map((d) => d.code)).toEqual(["CALIBRATION_SLOPE_UNBOUNDED"]);
});

test("all rows in one class: METRIC_NEEDS_BOTH_CLASSES", () => {
  expectProblem(() => calibrationSlope(f64([1, 1]), f64([0.2, 0.6])), "METRIC_NEEDS_BOTH_CLASSES");
});
