import {
  buildCoefficientTable,
  informationCriteria,
  likelihoodRatioTest,
  mcFaddenR2,
  penalizedNote,
  standardErrors,
  waldInterval,
} from "../../../src/engine/inference";

/** Closed-form arithmetic on a few numbers; only rounding separates them. */
const TOL = 1e-12;
/** z_{0.975} as printed by R: qnorm(0.975) = 1.959963984540054. */
const Z975 = 1.959963984540054;

describe("waldInterval", () => {
  test("is estimate +/- z se at the level", () => {
    const { lower, upper } = waldInterval(1, 0.5, 0.95);
    expect(Math.abs(lower - (1 - Z975 * 0.5))).toBeLessThan(TOL);
    expect(Math.abs(upper - (1 + Z975 * 0.5))).toBeLessThan(TOL);
  });
  test("has NaN ends for a level outside (0, 1)", () => {
    expect(waldInterval(1, 1, 1).lower).toBeNaN();
    expect(waldInterval(1, 1, 0).upper).toBeNaN();
  });
});

describe("buildCoefficientTable", () => {
  const base = {
    terms: ["(intercept)", "x1", "x2"],
    equationClasses: ["yes"],
    coefficients: [new Float64Array([0.5, -1, 7])],
    covariance: new Float64Array([0.04, 0, 0, 0, 0.25, 0, 0, 0, 1]),
    aliased: [false, false, true],
    level: 0.95,
    penalized: false,
  };
  test("gives se, z, two-sided p, Wald interval and exponentiated ratio ends", () => {
    const rows = buildCoefficientTable(base);
    expect(rows).toHaveLength(3);
    const r = rows[1];
    expect(r.outcome).toBe("yes");
    expect(r.term).toBe("x1");
    expect(Math.abs(r.standardError - 0.5)).toBeLessThan(TOL);
    expect(Math.abs(r.z - -2)).toBeLessThan(TOL);
    // R: 2 * pnorm(-2) = 0.04550026389635842
    expect(Math.abs(r.p - 0.04550026389635842)).toBeLessThan(1e-15);
    expect(Math.abs(r.lower - (-1 - Z975 * 0.5))).toBeLessThan(TOL);
    expect(Math.abs(r.ratio - Math.exp(-1))).toBeLessThan(TOL);
    expect(Math.abs(r.ratioLower - Math.exp(r.lower))).toBeLessThan(TOL);
    expect(Math.abs(r.ratioUpper - Math.exp(r.upper))).toBeLessThan(TOL);
    expect(r.estimable).toBe(true);
  });
  test("marks an aliased term not estimable with NaN in every number", () => {
    const r = buildCoefficientTable(base)[2];
    expect(r.estimable).toBe(false);
    for (const v of [r.estimate, r.standardError, r.z, r.p, r.lower, r.upper, r.ratio, r.ratioLower, r.ratioUpper]) {
      expect(v).toBeNaN();
    }
  });
  test("a penalized fit keeps estimates and ratios but has NaN se, z, p and intervals", () => {
    const r = buildCoefficientTable({ ...base, penalized: true })[1];
    expect(r.estimate).toBe(-1);
    expect(r.ratio).toBe(Math.exp(-1));
    for (const v of [r.standardError, r.z, r.p, r.lower, r.upper, r.ratioLower, r.ratioUpper]) expect(v).toBeNaN();
  });
  test("supplied (profile) intervals replace the Wald ends", () => {
    const intervals = [
      { lower: 0, upper: 1 },
      { lower: -3, upper: -0.1 },
      { lower: NaN, upper: NaN },
    ];
    const r = buildCoefficientTable({ ...base, intervals })[1];
    expect(r.lower).toBe(-3);
    expect(r.upper).toBe(-0.1);
    expect(r.ratioLower).toBe(Math.exp(-3));
  });
  test("handles several equations with per-coefficient aliasing (multi-class layout)", () => {
    const cov = new Float64Array(16);
    for (let i = 0; i < 4; i++) cov[i * 4 + i] = i + 1;
    const rows = buildCoefficientTable({
      terms: ["(intercept)", "x"],
      equationClasses: ["b", "c"],
      coefficients: [new Float64Array([1, 2]), new Float64Array([3, 4])],
      covariance: cov,
      aliased: [false, false, false, true],
      level: 0.9,
      penalized: false,
    });
    expect(rows.map((r) => r.outcome)).toEqual(["b", "b", "c", "c"]);
    expect(Math.abs(rows[2].standardError - Math.sqrt(3))).toBeLessThan(TOL);
    expect(rows[3].estimable).toBe(false);
  });
  test("without a covariance the inference columns are NaN", () => {
    const r = buildCoefficientTable({ ...base, covariance: null })[0];
    expect(r.estimate).toBe(0.5);
    expect(r.standardError).toBeNaN();
    expect(r.p).toBeNaN();
  });
});

describe("fit summaries", () => {
  test("likelihood-ratio test: 2 (l1 - l0) on df, p from chi-square", () => {
    const lr = likelihoodRatioTest(-10, -12, 1);
    expect(lr.statistic).toBeCloseTo(4, 12);
    // R: pchisq(4, 1, lower.tail = FALSE) = 0.04550026389635842
    expect(Math.abs(lr.p - 0.04550026389635842)).toBeLessThan(1e-15);
    expect(likelihoodRatioTest(-10, -10, 0).p).toBeNaN();
  });
  test("McFadden R2 and information criteria", () => {
    expect(mcFaddenR2(-5, -10)).toBe(0.5);
    expect(mcFaddenR2(0, 0)).toBeNaN();
    const ic = informationCriteria(-10, 3, 100);
    expect(ic.aic).toBe(26);
    expect(Math.abs(ic.bic - (20 + 3 * Math.log(100)))).toBeLessThan(TOL);
  });
  test("the penalized note names the penalty and is a note", () => {
    const d = penalizedNote(0.25);
    expect(d.code).toBe("PENALIZED_NO_P_VALUES");
    expect(d.severity).toBe("note");
    expect(d.message).toContain("penalty=0.25");
  });
});

describe("standardErrors", () => {
  test("are the square roots of the diagonal, NaN for a negative variance", () => {
    const se = standardErrors(new Float64Array([4, 1, 1, -1e-3]), 2);
    expect(se[0]).toBe(2);
    expect(se[1]).toBeNaN();
  });
});
