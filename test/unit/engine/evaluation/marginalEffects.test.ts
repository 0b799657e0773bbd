/**
 * Average marginal effects (engine): against Stata 11's `margins` for the Spector & Mazzeo grades
 * data (printed in statsmodels' results_discrete.py), statsmodels' get_margeff on the same data at
 * full precision, and a text predictor (ANES 1996) against the factor-variable rule computed with
 * numpy and a numerical Jacobian (fixture: test/fixtures/binary/spector.py). Then the rules: weights,
 * grouped counts, offsets, aliased terms, penalized fits, two classes only, the work bound.
 */
import * as fixture from "../../../fixtures/binary/spector.json";
import {
  EFFECTS_WORK_LIMIT,
  averageMarginalEffects,
  effectPlan,
  effectsWork,
  marginalEffects,
  type MarginalEffect,
} from "../../../../src/engine/evaluation/marginalEffects";
import { trainModel } from "../../../../src/engine/model";
import type { CellValue } from "../../../../src/engine/types";
import { expectClose } from "../binaryHelpers";

/** Stata held the Spector data in single precision: estimates agree to about 1e-7, so 1e-6 relative. */
const STATA_TOL = 1e-6;
/** Stata printed the standard errors to 7 decimals: half a unit there, plus the data's precision. */
const STATA_SE_ABS = 0.5e-7;
/** statsmodels at full precision (same data, Newton to 1e-14): agreement to rounding of the fits. */
const STATSMODELS_TOL = 1e-9;
/** The ANES reference SEs use central-difference Jacobians (error about 1e-10 relative). */
const NUMERICAL_JACOBIAN_TOL = 1e-7;

const d = fixture.data;
const me = fixture.marginal_effects;

function columnRange(name: string, values: readonly CellValue[]): CellValue[][] {
  return [[name], ...values.map((v) => [v])];
}
function tableRange(columns: Record<string, readonly CellValue[]>): CellValue[][] {
  const names = Object.keys(columns);
  const n = columns[names[0]].length;
  const rows: CellValue[][] = [names];
  for (let i = 0; i < n; i++) rows.push(names.map((k) => columns[k][i]));
  return rows;
}

const spectorModel = (options = {}) =>
  trainModel(columnRange("GRADE", d.GRADE), tableRange({ GPA: d.GPA, TUCE: d.TUCE, PSI: d.PSI }), options);

const estimates = (e: MarginalEffect[]) => e.map((x) => x.estimate);
const ses = (e: MarginalEffect[]) => e.map((x) => x.standardError);

function expectWithinPrinted(got: number[], printed: number[], what: string): void {
  got.forEach((g, i) => {
    const err = Math.abs(g - printed[i]);
    if (!(err <= STATA_SE_ABS + STATA_TOL * Math.abs(printed[i]))) {
      throw new Error(`${what}[${i}]: Stata printed ${printed[i]}, got ${g}; difference ${err}`);
    }
  });
}

describe("average marginal effects on the Spector & Mazzeo grades data", () => {
  test("PSI (0/1) as a discrete change 0 -> 1, GPA and TUCE as slopes: Stata 11 margins", () => {
    const r = averageMarginalEffects(spectorModel());
    expect(r.effects.map((e) => [e.term, e.kind, e.from, e.to])).toEqual([
      ["GPA", "slope", undefined, undefined],
      ["TUCE", "slope", undefined, undefined],
      ["PSI", "change", "0", "1"],
    ]);
    expectClose(estimates(r.effects), me.stata_change.effects, STATA_TOL, "AME vs Stata");
    expectWithinPrinted(ses(r.effects), me.stata_change.se, "SE vs Stata");
    expect([r.rows, r.observations, r.level]).toEqual([32, 32, 0.95]);
  });

  test("indicators=slope treats PSI as a number (Stata's margins without the factor declaration)", () => {
    const r = averageMarginalEffects(spectorModel(), { indicators: "slope" });
    expect(r.effects.map((e) => e.kind)).toEqual(["slope", "slope", "slope"]);
    expectClose(estimates(r.effects), me.stata_slope.effects, STATA_TOL, "AME vs Stata (slope)");
    expectWithinPrinted(ses(r.effects), me.stata_slope.se, "SE vs Stata (slope)");
  });

  test("statsmodels get_margeff at full precision: effects, SE, p and 95% interval", () => {
    for (const [indicators, ref] of [
      ["change", me.statsmodels_change],
      ["slope", me.statsmodels_slope],
    ] as const) {
      const e = averageMarginalEffects(spectorModel(), { indicators }).effects;
      expectClose(estimates(e), ref.effects, STATSMODELS_TOL, `AME (${indicators})`);
      expectClose(ses(e), ref.se, STATSMODELS_TOL, `SE (${indicators})`);
      expectClose(e.map((x) => x.p), ref.pvalues, STATSMODELS_TOL, `p (${indicators})`);
      expectClose(e.flatMap((x) => [x.lower, x.upper]), ref.conf_int_95, STATSMODELS_TOL, `interval (${indicators})`);
      e.forEach((x) => expect(x.z).toBeCloseTo(x.estimate / x.standardError, 12));
    }
  });

  test("the interval level follows the option, else the fit's level", () => {
    const at90 = averageMarginalEffects(spectorModel({ level: 0.9 })).effects[0];
    const z90 = 1.6448536269514722; // Phi^-1(0.95), R qnorm(0.95)
    expectClose([at90.upper - at90.estimate], [z90 * at90.standardError], 1e-12, "90% half-width");
    const at99 = averageMarginalEffects(spectorModel(), { level: 0.99 });
    expect(at99.level).toBe(0.99);
  });

  test("a slope is the limit of the finite difference of the average probability (central, h = 1e-5)", () => {
    const m = spectorModel();
    const b = m.fit.coefficients[0];
    const meanP = (shift: number) => {
      let s = 0;
      for (let i = 0; i < 32; i++) s += 1 / (1 + Math.exp(-(b[0] + b[1] * (d.GPA[i] + shift) + b[2] * d.TUCE[i] + b[3] * d.PSI[i])));
      return s / 32;
    };
    const h = 1e-5;
    const numeric = (meanP(h) - meanP(-h)) / (2 * h);
    expectClose([averageMarginalEffects(m).effects[0].estimate], [numeric], 1e-8, "slope vs finite difference");
  });
});

describe("a text predictor: each level against the reference, the other levels at 0 (ANES 1996)", () => {
  const a = fixture.anes96;
  const model = trainModel(columnRange("vote", a.data.vote), tableRange({ age: a.data.age, income: a.data.income, educ: a.data.educ }), {
    referenceLevels: { educ: a.reference },
  });

  test("the fit matches statsmodels' Logit (same terms, same order)", () => {
    expect(model.fit.terms.slice(1)).toEqual(a.terms);
    // statsmodels: const, age, income, educ indicators; ours: intercept first too.
    expectClose(model.fit.coefficients[0], a.params, STATSMODELS_TOL, "coefficients");
  });

  test("effects and delta-method SEs agree with the numpy reference", () => {
    const r = averageMarginalEffects(model);
    expect(r.effects.map((e) => e.kind)).toEqual(["slope", "slope", ...new Array(6).fill("change")]);
    expect(r.effects.slice(2).map((e) => [e.from, e.to])).toEqual(a.terms.slice(2).map((t) => [a.reference, t.slice("educ=".length)]));
    expectClose(estimates(r.effects), a.effects, STATSMODELS_TOL, "AME");
    expectClose(ses(r.effects), a.se, NUMERICAL_JACOBIAN_TOL, "SE");
    // The slopes do not depend on the rule for the text column: statsmodels' own get_margeff.
    expectClose(estimates(r.effects.slice(0, 2)), a.statsmodels_slopes.effects, STATSMODELS_TOL, "slopes vs get_margeff");
    expectClose(ses(r.effects.slice(0, 2)), a.statsmodels_slopes.se, STATSMODELS_TOL, "slope SEs vs get_margeff");
  });

  test("the plan names the siblings: each indicator's other levels are set to 0 with it", () => {
    const plan = effectPlan(model.encoding, model.design, "change");
    expect(plan[2]).toEqual({ column: 2, kind: "change", siblings: [3, 4, 5, 6, 7], from: a.reference, to: "1-8 grades" });
    expect(plan[7].siblings).toEqual([2, 3, 4, 5, 6]);
  });
});

describe("rules", () => {
  /** Rows repeated, weights and grouped counts describe the same observations: same effects. */
  const INVARIANCE_TOL = 1e-9;

  test("weight 2 equals the row twice; observations count the weights", () => {
    const w = d.GRADE.map((_, i) => (i % 3 === 0 ? 2 : 1));
    const weighted = trainModel(columnRange("GRADE", d.GRADE), tableRange({ GPA: d.GPA, TUCE: d.TUCE, PSI: d.PSI }), {
      weights: columnRange("w", w),
    });
    const rep = (v: readonly number[]) => v.flatMap((x, i) => (w[i] === 2 ? [x, x] : [x]));
    const doubled = trainModel(columnRange("GRADE", rep(d.GRADE)), tableRange({ GPA: rep(d.GPA), TUCE: rep(d.TUCE), PSI: rep(d.PSI) }));
    const a = averageMarginalEffects(weighted);
    const b = averageMarginalEffects(doubled);
    expect(a.observations).toBe(43);
    expectClose(estimates(a.effects), estimates(b.effects), INVARIANCE_TOL, "weighted vs repeated AME");
    expectClose(ses(a.effects), ses(b.effects), INVARIANCE_TOL, "weighted vs repeated SE");
  });

  test("grouped counts (successes of trials) equal the expanded rows", () => {
    // Three dose groups: 1 of 4, 2 of 4, 3 of 4 (x = 0, 1, 2), plus a 0/1 column z.
    const x = [0, 1, 2, 0, 1, 2];
    const z = [0, 0, 0, 1, 1, 1];
    const successes = [1, 2, 3, 2, 3, 3];
    const trials = [4, 4, 4, 4, 4, 5];
    const grouped = trainModel(columnRange("s", successes), tableRange({ x, z }), { trials: columnRange("n", trials) });
    const labels: number[] = [];
    const ex: number[] = [];
    const ez: number[] = [];
    x.forEach((xi, g) => {
      for (let k = 0; k < trials[g]; k++) {
        labels.push(k < successes[g] ? 1 : 0);
        ex.push(xi);
        ez.push(z[g]);
      }
    });
    const expanded = trainModel(columnRange("y", labels), tableRange({ x: ex, z: ez }));
    const a = averageMarginalEffects(grouped);
    const b = averageMarginalEffects(expanded);
    expect(a.observations).toBe(25);
    expect(a.effects.map((e) => e.kind)).toEqual(["slope", "change"]);
    expectClose(estimates(a.effects), estimates(b.effects), INVARIANCE_TOL, "grouped vs expanded AME");
    expectClose(ses(a.effects), ses(b.effects), INVARIANCE_TOL, "grouped vs expanded SE");
  });

  test("a constant offset is absorbed by the intercept: the effects do not change", () => {
    const plain = averageMarginalEffects(spectorModel());
    const shifted = averageMarginalEffects(spectorModel({ offset: columnRange("off", d.GRADE.map(() => 0.7)) }));
    expectClose(estimates(shifted.effects), estimates(plain.effects), 1e-8, "AME with offset");
    expectClose(ses(shifted.effects), ses(plain.effects), 1e-7, "SE with offset");
  });

  test("an aliased term is not estimable; the others are unchanged", () => {
    const gpa2 = d.GPA.map((v) => 2 * v);
    const m = trainModel(columnRange("GRADE", d.GRADE), tableRange({ GPA: d.GPA, TUCE: d.TUCE, PSI: d.PSI, GPA2: gpa2 }));
    const r = averageMarginalEffects(m);
    expect(r.effects[3]).toMatchObject({ term: "GPA2", estimable: false });
    expect(Number.isNaN(r.effects[3].estimate)).toBe(true);
    expectClose(estimates(r.effects.slice(0, 3)), me.statsmodels_change.effects, 1e-8, "AME beside an aliased term");
    expectClose(ses(r.effects.slice(0, 3)), me.statsmodels_change.se, 1e-7, "SE beside an aliased term");
  });

  test("a penalized fit gives effects without standard errors, with a note", () => {
    const r = averageMarginalEffects(spectorModel({ penalty: 1 }));
    expect(r.effects.every((e) => Number.isFinite(e.estimate) && Number.isNaN(e.standardError) && Number.isNaN(e.p))).toBe(true);
    expect(r.diagnostics.map((x) => x.code)).toEqual(["EFFECTS_NO_STANDARD_ERRORS"]);
  });

  test("several classes are refused, naming the count", () => {
    const m = trainModel(columnRange("c", ["a", "b", "c", "a", "b", "c", "a", "c"]), tableRange({ x: [1, 2, 3, 2, 1, 3, 1, 2] }));
    expect(() => averageMarginalEffects(m)).toThrow(/two-class models only, and the labels hold 3 classes/);
  });

  test("work beyond EFFECTS_WORK_LIMIT is refused before any row is read", () => {
    // 200,000 rows x 51 parameters x (50 changes + 1) passes: about 5.2e8 > 4e8. One shared column.
    const rows = 200_000;
    const shared = new Float64Array(rows);
    const design = { rows, columns: new Array(50).fill(shared), names: Array.from({ length: 50 }, (_, j) => `z${j}`) };
    const plan = design.names.map((_, column) => ({ column, kind: "change" as const, siblings: [] }));
    expect(effectsWork(rows, 51, plan)).toBe(rows * 51 * 51);
    expect(effectsWork(rows, 51, plan)).toBeGreaterThan(EFFECTS_WORK_LIMIT);
    const input = {
      design,
      coefficients: new Float64Array(51),
      aliased: new Array(51).fill(false),
      intercept: true,
      covariance: null,
      plan,
      level: 0.95,
    };
    expect(() => marginalEffects(input)).toThrow(/would take too long in one call/);
    // The same call on 2,000 rows is accepted.
    const small = { ...input, design: { ...design, rows: 2000, columns: new Array(50).fill(new Float64Array(2000)) } };
    expect(marginalEffects(small).effects).toHaveLength(50);
  });
});
