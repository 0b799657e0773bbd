/**
 * Metamorphic checks: transform the input in a way whose effect on the maximum-likelihood fit is
 * known exactly, fit both, and compare. docs/numeric-extremes.md ("Metamorphic relations") derives
 * each relation. Data: invented, from a seeded generator in this file.
 *
 * Reference for the relations: the logistic and baseline-category logit models are linear in the
 * coefficients, so a reparameterization of the design by an invertible linear map maps the ML
 * estimate by the inverse map and leaves the likelihood unchanged (McCullagh & Nelder, Generalized
 * Linear Models, 2nd ed., 1989, §2.2 and §4.4; Agresti, Categorical Data Analysis, 3rd ed., 2013,
 * §5.1 and §8.1); frequency weights equal repeated rows because the log-likelihood is a weighted sum.
 * Firth's estimate is equivariant under such maps (Firth, Biometrika 80 (1993) 27-38, §3: the
 * Jeffreys-prior penalty changes by a constant under a linear reparameterization).
 */
import fc from "fast-check";
import { scoreRows, trainModel, type ModelOptions, type TrainedModel } from "../../../src/engine/model";
import { brierScore, logLoss, rocAuc } from "../../../src/engine/metrics";
import type { CellValue } from "../../../src/engine/types";
import { SEED, type Range } from "./support";

/**
 * Two fits of the same likelihood from transformed inputs differ only by rounding in the sums and
 * by where the Newton iterations stop (relative deviance change < 1e-10, after which the estimate
 * is accurate to far below its standard error). Differences are measured against
 * max(|estimate|, standard error); 1e-6 of that is well below any statistical meaning and well
 * above the measured differences (about 1e-12).
 */
const META_REL_TOL = 1e-6;
/** Probabilities are compared absolutely: rounding differences in the linear predictor of order 1e-12. */
const PROB_ABS_TOL = 1e-9;
const RUNS = 25;

/** A small linear congruential generator (Numerical Recipes constants) for reproducible invented data. */
function lcg(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 4294967296;
  };
}

interface Data {
  names: string[];
  rows: CellValue[][];
  binary: string[];
  classes: string[];
}

/** 80 rows: two numeric predictors and a three-level category; a binary and a three-class label drawn from known models. */
function makeData(): Data {
  const u = lcg(4242);
  const normal = () => Math.sqrt(-2 * Math.log(u() + 1e-12)) * Math.cos(2 * Math.PI * u());
  const rows: CellValue[][] = [];
  const binary: string[] = [];
  const classes: string[] = [];
  const regions = ["North", "South", "East"];
  for (let i = 0; i < 80; i++) {
    const dose = 10 + 3 * normal();
    const age = 40 + 12 * u();
    const region = regions[i % 3];
    rows.push([dose, age, region]);
    const eta = -4 + 0.3 * dose + 0.02 * age + (region === "South" ? 0.5 : 0);
    binary.push(u() < 1 / (1 + Math.exp(-eta)) ? "sick" : "well");
    const e1 = -2 + 0.2 * dose;
    const e2 = 1 - 0.03 * age + (region === "East" ? 0.7 : 0);
    const z = 1 + Math.exp(e1) + Math.exp(e2);
    const r = u() * z;
    classes.push(r < 1 ? "apple" : r < 1 + Math.exp(e1) ? "pear" : "plum");
  }
  return { names: ["dose", "age", "region"], rows, binary, classes };
}

const DATA = makeData();
const col = (h: string, v: readonly CellValue[]): Range => [[h], ...v.map((x) => [x])];

function fit(labels: readonly CellValue[], names: string[], rows: CellValue[][], options: ModelOptions = {}): TrainedModel {
  const m = trainModel(col("y", labels), [names, ...rows], options);
  const errors = m.fit.diagnostics.filter((d) => d.severity !== "note" && d.code !== "PENALIZED_NO_P_VALUES");
  if (errors.length > 0) throw new Error(`unexpected diagnostics: ${errors.map((d) => d.message).join(" | ")}`);
  return m;
}

/** Coefficient of (equation class, term) with its standard error. */
function coef(m: TrainedModel, cls: string, term: string): { b: number; se: number } {
  const row = m.fit.table.find((r) => r.outcome === cls && r.term === term);
  if (!row) throw new Error(`no coefficient for ${cls}/${term} among ${m.fit.table.map((r) => `${r.outcome}/${r.term}`).join(", ")}`);
  return { b: row.estimate, se: row.standardError };
}

function expectNear(got: number, want: number, scale: number, what: string): void {
  const tol = META_REL_TOL * Math.max(Math.abs(want), Math.abs(scale), 1e-300);
  if (!(Math.abs(got - want) <= tol)) throw new Error(`${what}: expected ${want}, got ${got}, tolerance ${tol}`);
}

/** Same coefficient table up to a relabelling of (class, term) pairs. */
function expectSameTable(a: TrainedModel, b: TrainedModel, map: (cls: string, term: string) => [string, string] = (c, t) => [c, t]): void {
  expect(b.fit.table.length).toBe(a.fit.table.length);
  for (const r of a.fit.table) {
    const [c, t] = map(r.outcome, r.term);
    const other = coef(b, c, t);
    expectNear(other.b, r.estimate, r.standardError, `estimate ${r.outcome}/${r.term}`);
    if (Number.isFinite(r.standardError)) expectNear(other.se, r.standardError, r.standardError, `SE ${r.outcome}/${r.term}`);
  }
  expectNear(b.fit.logLikelihood, a.fit.logLikelihood, 1, "log-likelihood");
}

/** Probabilities of each class per training row. */
function probs(m: TrainedModel): Map<string, Float64Array> {
  const s = scoreRows(m, null);
  return new Map(s.classes.map((c, k) => [c, s.prediction.probabilities[k]]));
}

const permutation = (n: number) =>
  fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: n, maxLength: n }).map((keys) =>
    keys.map((k, i) => [k, i] as const).sort((x, y) => x[0] - y[0] || x[1] - y[1]).map(([, i]) => i),
  );

describe("metamorphic: row order", () => {
  test.each([
    ["binary", DATA.binary],
    ["three classes", DATA.classes],
  ])("permuting the rows (%s) leaves every estimate, standard error and row probability unchanged", (_, labels) => {
    const base = fit(labels, DATA.names, DATA.rows);
    const baseP = probs(base);
    fc.assert(
      fc.property(permutation(DATA.rows.length), (perm) => {
        const m = fit(perm.map((i) => labels[i]), DATA.names, perm.map((i) => DATA.rows[i]));
        expectSameTable(base, m);
        for (const [cls, p] of probs(m)) perm.forEach((i, r) => expect(Math.abs(p[r] - (baseP.get(cls) as Float64Array)[i])).toBeLessThan(PROB_ABS_TOL));
      }),
      { seed: SEED, numRuns: RUNS },
    );
  });
});

describe("metamorphic: column order", () => {
  test.each([
    ["binary", DATA.binary],
    ["three classes", DATA.classes],
  ])("permuting the predictor columns (%s) permutes the coefficients and changes nothing else", (_, labels) => {
    const base = fit(labels, DATA.names, DATA.rows);
    fc.assert(
      fc.property(permutation(DATA.names.length), (perm) => {
        const m = fit(labels, perm.map((j) => DATA.names[j]), DATA.rows.map((r) => perm.map((j) => r[j])));
        expectSameTable(base, m);
      }),
      { seed: SEED, numRuns: RUNS },
    );
  });
});

describe("metamorphic: repeated rows versus weights", () => {
  test.each([
    ["binary", DATA.binary],
    ["three classes", DATA.classes],
  ])("repeating chosen rows (%s) is the same fit as giving them weight 2 (frequency weights)", (_, labels) => {
    fc.assert(
      fc.property(fc.uniqueArray(fc.integer({ min: 0, max: DATA.rows.length - 1 }), { minLength: 1, maxLength: 20 }), (twice) => {
        const repeatedRows = [...DATA.rows, ...twice.map((i) => DATA.rows[i])];
        const repeatedLabels = [...labels, ...twice.map((i) => labels[i])];
        const a = fit(repeatedLabels, DATA.names, repeatedRows);
        const w = DATA.rows.map((_, i) => (twice.includes(i) ? 2 : 1));
        const b = fit(labels, DATA.names, DATA.rows, { weights: col("w", w) });
        expectSameTable(a, b);
        expectNear(b.fit.deviance, a.fit.deviance, 1, "deviance");
        expect(b.fit.observations).toBe(a.fit.observations);
      }),
      { seed: SEED, numRuns: RUNS },
    );
  });
});

describe("metamorphic: relabelling classes", () => {
  test("swapping the positive class negates every coefficient, keeps the standard errors, and turns p into 1 - p", () => {
    const a = fit(DATA.binary, DATA.names, DATA.rows, { positive: "sick" });
    const b = fit(DATA.binary, DATA.names, DATA.rows, { positive: "well" });
    expect([a.fit.positiveClass, b.fit.positiveClass]).toEqual(["sick", "well"]);
    for (const r of a.fit.table) {
      const o = coef(b, "well", r.term);
      expectNear(o.b, -r.estimate, r.standardError, `estimate ${r.term}`);
      expectNear(o.se, r.standardError, r.standardError, `SE ${r.term}`);
    }
    const pa = scoreRows(a, null);
    const pb = scoreRows(b, null);
    const sickA = pa.prediction.probabilities[pa.classes.indexOf("sick")];
    const wellB = pb.prediction.probabilities[pb.classes.indexOf("well")];
    sickA.forEach((p, i) => expect(Math.abs(wellB[i] - (1 - p))).toBeLessThan(PROB_ABS_TOL));
    expectNear(b.fit.logLikelihood, a.fit.logLikelihood, 1, "log-likelihood");
  });

  test("renaming the three classes (same reference) moves each equation to the renamed class unchanged", () => {
    const rename: Record<string, string> = { apple: "Zeta", pear: "alpha", plum: "mid" };
    const a = fit(DATA.classes, DATA.names, DATA.rows, { reference: "apple" });
    const b = fit(DATA.classes.map((c) => rename[c]), DATA.names, DATA.rows, { reference: "Zeta" });
    expectSameTable(a, b, (c, t) => [rename[c], t]);
    const pa = probs(a);
    const pb = probs(b);
    for (const [c, p] of pa) p.forEach((v, i) => expect(Math.abs((pb.get(rename[c]) as Float64Array)[i] - v)).toBeLessThan(PROB_ABS_TOL));
  });

  test("changing the reference class r re-expresses every equation as b_k - b_r, and leaves probabilities unchanged", () => {
    const a = fit(DATA.classes, DATA.names, DATA.rows, { reference: "apple" });
    const b = fit(DATA.classes, DATA.names, DATA.rows, { reference: "pear" });
    for (const term of a.fit.terms) {
      const pear = coef(a, "pear", term);
      const plum = coef(a, "plum", term);
      // apple against pear is minus pear against apple; plum against pear is the difference.
      expectNear(coef(b, "apple", term).b, -pear.b, pear.se, `apple|pear ${term}`);
      expectNear(coef(b, "apple", term).se, pear.se, pear.se, `SE apple|pear ${term}`);
      expectNear(coef(b, "plum", term).b, plum.b - pear.b, Math.max(plum.se, pear.se), `plum|pear ${term}`);
    }
    const pa = probs(a);
    const pb = probs(b);
    for (const [c, p] of pa) p.forEach((v, i) => expect(Math.abs((pb.get(c) as Float64Array)[i] - v)).toBeLessThan(PROB_ABS_TOL));
  });
});

describe("metamorphic: affine rescaling of a column", () => {
  // x' = a x + s: eta = b0 + b1 x = (b0 - b1 s / a) + (b1 / a) x', so b1' = b1 / a, b0' = b0 - b1 s / a,
  // SE(b1') = SE(b1) / |a|, every other coefficient, the likelihood and the probabilities unchanged.
  const affine = fc.record({
    a: fc.oneof(fc.double({ min: 1e-3, max: 1e3, noNaN: true }), fc.double({ min: -1e3, max: -1e-3, noNaN: true })),
    s: fc.double({ min: -1e3, max: 1e3, noNaN: true }),
    column: fc.constantFrom(0, 1),
  });

  function rescaled(a: number, s: number, j: number): CellValue[][] {
    return DATA.rows.map((r) => r.map((v, k) => (k === j ? (v as number) * a + s : v)));
  }

  function checkAffine(base: TrainedModel, m: TrainedModel, a: number, s: number, j: number): void {
    const name = DATA.names[j];
    for (const cls of base.fit.equationClasses) {
      const b1 = coef(base, cls, name);
      const b0 = coef(base, cls, "(intercept)");
      expectNear(coef(m, cls, name).b, b1.b / a, b1.se / Math.abs(a), `${cls}/${name}`);
      if (Number.isFinite(b1.se)) expectNear(coef(m, cls, name).se, b1.se / Math.abs(a), b1.se / Math.abs(a), `SE ${cls}/${name}`);
      // The intercept moves by -b1 s / a: its scale is that of the terms being added.
      expectNear(coef(m, cls, "(intercept)").b, b0.b - (b1.b * s) / a, Math.max(b0.se, Math.abs((b1.se * s) / a)), `${cls}/(intercept)`);
      for (const t of base.fit.terms) {
        if (t === name || t === "(intercept)") continue;
        const o = coef(base, cls, t);
        expectNear(coef(m, cls, t).b, o.b, o.se, `${cls}/${t}`);
      }
    }
    expectNear(m.fit.logLikelihood, base.fit.logLikelihood, 1, "log-likelihood");
    const pa = probs(base);
    const pb = probs(m);
    for (const [c, p] of pa) p.forEach((v, i) => expect(Math.abs((pb.get(c) as Float64Array)[i] - v)).toBeLessThan(PROB_ABS_TOL));
  }

  test.each([
    ["binary", DATA.binary, {}],
    ["three classes", DATA.classes, {}],
    ["binary, Firth", DATA.binary, { firth: true }],
  ] as const)("x -> a x + s (%s): the slope scales by 1/a and the intercept shifts by -slope s / a", (_, labels, options) => {
    const base = fit(labels, DATA.names, DATA.rows, options);
    fc.assert(
      fc.property(affine, ({ a, s, column }) => {
        checkAffine(base, fit(labels, DATA.names, rescaled(a, s, column), options), a, s, column);
      }),
      { seed: SEED, numRuns: RUNS },
    );
  });

  test("the same relation holds at 50,000 rows (the large-data path with a subsample warm start)", () => {
    let state = 3;
    const u = () => (state = (Math.imul(state, 1664525) + 1013904223) >>> 0) / 4294967296;
    const x = Array.from({ length: 50000 }, () => u() * 4 - 2);
    const y = x.map((v) => (u() < 1 / (1 + Math.exp(-v)) ? "yes" : "no"));
    const base = fit(y, ["x"], x.map((v) => [v]), { positive: "yes" });
    for (const [a, s] of [[1e-3, 7], [-250, 0.5]]) {
      const m = fit(y, ["x"], x.map((v) => [a * v + s]), { positive: "yes" });
      const b1 = coef(base, "yes", "x");
      const b0 = coef(base, "yes", "(intercept)");
      expectNear(coef(m, "yes", "x").b, b1.b / a, b1.se / Math.abs(a), `slope, a = ${a}`);
      expectNear(coef(m, "yes", "x").se, b1.se / Math.abs(a), b1.se / Math.abs(a), `SE, a = ${a}`);
      expectNear(coef(m, "yes", "(intercept)").b, b0.b - (b1.b * s) / a, Math.max(b0.se, Math.abs((b1.se * s) / a)), `intercept, a = ${a}`);
    }
  });

  test("with a penalty on standardized coefficients (the default scale) the same relation holds", () => {
    const options: ModelOptions = { penalty: 2, positive: "sick" };
    const base = fit(DATA.binary, DATA.names, DATA.rows, options);
    fc.assert(
      fc.property(affine, ({ a, s, column }) => {
        const m = fit(DATA.binary, DATA.names, rescaled(a, s, column), options);
        const name = DATA.names[column];
        const b1 = coef(base, "sick", name).b;
        // Penalized fits have no standard errors: compare against the estimates' own size.
        expectNear(coef(m, "sick", name).b, b1 / a, Math.abs(b1 / a), name);
        expectNear(coef(m, "sick", "(intercept)").b, coef(base, "sick", "(intercept)").b - (b1 * s) / a, Math.max(1, Math.abs((b1 * s) / a)), "intercept");
      }),
      { seed: SEED, numRuns: RUNS },
    );
  });

  test("with a penalty on original-scale coefficients the fit is NOT scale-equivariant (the penalty sees the units)", () => {
    const options: ModelOptions = { penalty: 2, penaltyScale: "original", positive: "sick" };
    const base = fit(DATA.binary, DATA.names, DATA.rows, options);
    const m = fit(DATA.binary, DATA.names, rescaled(100, 0, 0), options);
    const b1 = coef(base, "sick", "dose").b;
    expect(Math.abs(coef(m, "sick", "dose").b - b1 / 100)).toBeGreaterThan(1e-3 * Math.abs(b1 / 100));
  });
});

describe("metamorphic: metrics", () => {
  // Metrics are sums over rows (log-loss, Brier) or over positive-negative pairs (AUC and its DeLong
  // variance), so row order cannot matter; calling the other class positive maps (y, p) to
  // (1 - y, 1 - p), which leaves each row's loss and each pair's ordering unchanged (DeLong, DeLong &
  // Clarke-Pearson, Biometrics 44 (1988) 837-845, for the AUC as a two-sample statistic).
  /** Same sums in another order: rounding only. */
  const METRIC_REL_TOL = 1e-12;
  const expectRel = (got: number, want: number, what: string) => {
    if (!(Math.abs(got - want) <= METRIC_REL_TOL * Math.max(1, Math.abs(want)))) throw new Error(`${what}: expected ${want}, got ${got}`);
  };
  const sample = fc
    .array(fc.tuple(fc.constantFrom(0, 1), fc.double({ min: 0, max: 1, noNaN: true }), fc.constantFrom(1, 2, 0.5)), { minLength: 4, maxLength: 40 })
    .filter((rows) => rows.some((r) => r[0] === 1) && rows.some((r) => r[0] === 0));

  test("log-loss, Brier score and AUC (with its standard error) do not depend on row order, and weight 2 equals a repeated row", () => {
    fc.assert(
      fc.property(sample, permutation(40), (rows, perm) => {
        const order = perm.filter((i) => i < rows.length);
        const y = Float64Array.from(rows, (r) => r[0]);
        const p = Float64Array.from(rows, (r) => r[1]);
        const w = Float64Array.from(rows, (r) => r[2]);
        const yp = Float64Array.from(order, (i) => y[i]);
        const pp = Float64Array.from(order, (i) => p[i]);
        const wp = Float64Array.from(order, (i) => w[i]);
        expectRel(logLoss(yp, pp, { weights: wp }).value, logLoss(y, p, { weights: w }).value, "log-loss");
        expectRel(brierScore(yp, pp, { weights: wp }).value, brierScore(y, p, { weights: w }).value, "Brier");
        const a = rocAuc(y, p);
        const b = rocAuc(yp, pp);
        expect(Math.abs(b.auc - a.auc)).toBeLessThanOrEqual(METRIC_REL_TOL);
        if (Number.isFinite(a.standardError)) expect(Math.abs(b.standardError - a.standardError)).toBeLessThanOrEqual(METRIC_REL_TOL * Math.max(1, a.standardError));
        // Weight 2 on the first row equals that row twice.
        const w2 = Float64Array.from(rows, (_, i) => (i === 0 ? 2 : 1));
        const yd = Float64Array.from([y[0], ...y]);
        const pd = Float64Array.from([p[0], ...p]);
        expectRel(logLoss(y, p, { weights: w2 }).value, logLoss(yd, pd).value, "log-loss weight 2");
        expect(Math.abs(rocAuc(y, p, { weights: w2 }).auc - rocAuc(yd, pd).auc)).toBeLessThanOrEqual(METRIC_REL_TOL);
      }),
      { seed: SEED, numRuns: 200 },
    );
  });

  // Probabilities on a grid of thousandths, so that 1 - p keeps distinct values distinct (1 - 5e-324
  // rounds to 1 and would turn a strict order into a tie).
  const gridSample = fc
    .array(fc.tuple(fc.constantFrom(0, 1), fc.integer({ min: 0, max: 1000 }).map((k) => k / 1000)), { minLength: 4, maxLength: 40 })
    .filter((rows) => rows.some((r) => r[0] === 1) && rows.some((r) => r[0] === 0));

  test("calling the other class positive, (y, p) -> (1 - y, 1 - p), leaves log-loss, Brier score and AUC unchanged", () => {
    fc.assert(
      fc.property(gridSample, (rows) => {
        const y = Float64Array.from(rows, (r) => r[0]);
        const p = Float64Array.from(rows, (r) => r[1]);
        const y1 = y.map((v) => 1 - v);
        const p1 = p.map((v) => 1 - v);
        // 1 - p is rounded once, so compare with room for that rounding inside the logarithm.
        expect(Math.abs(logLoss(y1, p1).value - logLoss(y, p).value)).toBeLessThanOrEqual(1e-9 * Math.max(1, logLoss(y, p).value));
        expect(Math.abs(brierScore(y1, p1).value - brierScore(y, p).value)).toBeLessThanOrEqual(1e-12);
        expect(Math.abs(rocAuc(y1, p1).auc - rocAuc(y, p).auc)).toBeLessThanOrEqual(METRIC_REL_TOL);
      }),
      { seed: SEED, numRuns: 200 },
    );
  });
});
