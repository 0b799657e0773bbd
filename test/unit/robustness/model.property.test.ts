/**
 * Properties of the model facade (trainModel / scoreRows in src/engine/model.ts) over hostile
 * training ranges: every call gives a usable model with clean numbers, a model whose error
 * diagnostic says why there are no numbers, or a catalogue problem, and never anything else.
 */
import fc from "fast-check";
import { scoreRows, trainModel, type ModelOptions, type TrainedModel } from "../../../src/engine/model";
import { nearBoundaryRows } from "../../../src/engine/boundary";
import { expectCatalogueDiagnostics, expectCatalogueError, grid, anyCell, RUNS, SEED, trainingRanges, fittableRanges, valueOrProblem, type Range } from "./support";

/** Probabilities of a scored row add up to 1 up to rounding of K exponentials and one division. */
const SUM_TOL = 1e-12;

const options: fc.Arbitrary<ModelOptions> = fc.record(
  {
    penalty: fc.constantFrom(0, 0.1, 10),
    firth: fc.boolean(),
    intercept: fc.boolean(),
    intervalMethod: fc.constantFrom<"wald" | "profile">("wald", "profile"),
    headers: fc.constantFrom<"auto" | "yes" | "no">("auto", "yes", "no"),
    minLevelCount: fc.constantFrom(0, 2),
    level: fc.constantFrom(0.95, 0.5, 0.999999),
  },
  { requiredKeys: [] },
);

/** Invariants of a trained model's fit. */
function checkFit(m: TrainedModel, context: string): void {
  const fit = m.fit;
  expectCatalogueDiagnostics(fit.diagnostics, context);
  const failed = fit.diagnostics.some((d) => d.severity === "error");
  expect(fit.coefficients.length).toBe(fit.equationClasses.length);
  for (const b of fit.coefficients) {
    expect(b.length).toBe(fit.terms.length);
    b.forEach((v, t) => {
      // A usable fit gives a finite estimate for every estimable term, NaN exactly for aliased ones.
      if (failed) expect(Number.isNaN(v)).toBe(true);
      else if (fit.aliased[t]) expect(Number.isNaN(v)).toBe(true);
      else if (!Number.isFinite(v)) throw new Error(`${context}: estimate of ${fit.terms[t]} is ${v} in a fit without an error diagnostic`);
    });
  }
  for (const row of fit.table) {
    if (failed || !row.estimable) continue;
    expect(Number.isFinite(row.estimate)).toBe(true);
    // Standard errors are finite and positive, or NaN when not given (penalized fits); never infinite or negative.
    if (!Number.isNaN(row.standardError) && !(row.standardError >= 0 && Number.isFinite(row.standardError))) {
      throw new Error(`${context}: standard error of ${row.term} is ${row.standardError}`);
    }
    if (!Number.isNaN(row.p) && !(row.p >= 0 && row.p <= 1)) throw new Error(`${context}: p of ${row.term} is ${row.p}`);
  }
  if (!failed) {
    expect(Number.isFinite(fit.logLikelihood)).toBe(true);
    expect(fit.logLikelihood).toBeLessThanOrEqual(1e-9);
  }
}

/** Invariants of the scores of the training rows. */
function checkScores(m: TrainedModel, context: string): void {
  const s = scoreRows(m, null);
  const failed = m.fit.diagnostics.some((d) => d.severity === "error");
  expect(s.rows).toBe(m.rows);
  for (let i = 0; i < s.rows; i++) {
    const probs = s.prediction.probabilities.map((a) => a[i]);
    if (s.scored[i] && !failed) {
      let sum = 0;
      for (const p of probs) {
        if (!(p >= 0 && p <= 1)) throw new Error(`${context}: row ${i} has probability ${p}`);
        sum += p;
      }
      if (Math.abs(sum - 1) > SUM_TOL) throw new Error(`${context}: row ${i} probabilities sum to ${sum}`);
      expect(s.prediction.predicted[i]).toBeGreaterThanOrEqual(0);
      expect(s.predictedClass[i]).not.toBeNull();
      expect(Number.isFinite(s.prediction.margin[i])).toBe(true);
    } else if (!s.scored[i]) {
      // An unscored row keeps its place with NaN and no class, and a catalogue problem says why.
      probs.forEach((p) => expect(Number.isNaN(p)).toBe(true));
      expect(s.predictedClass[i]).toBeNull();
      expect(s.problems.some((p) => p.index === i)).toBe(true);
    }
  }
  for (const p of s.problems) expect(["MISSING_FOR_SCORING", "UNSEEN_LEVEL", "OUT_OF_DOMAIN", "NOT_A_NUMBER", "NOT_FINITE_VALUE"]).toContain(p.code);
}

describe("trainModel and scoreRows on hostile ranges", () => {
  test("random labels x predictors x options: a checked model or a catalogue problem, and clean scores", () => {
    fc.assert(
      fc.property(fc.oneof(trainingRanges, fittableRanges), options, ({ labels, predictors }, opts) => {
        const context = `trainModel(${JSON.stringify(labels)}, ${JSON.stringify(predictors)}, ${JSON.stringify(opts)})`;
        const m = valueOrProblem(() => trainModel(labels, predictors, opts), context);
        if (!m) return;
        checkFit(m, context);
        checkScores(m, context);
      }),
      { seed: SEED, numRuns: RUNS.fit },
    );
  });

  test("borderline rows of any usable model: sorted by margin, within the band or undecided, counts that add up", () => {
    fc.assert(
      fc.property(
        fc.oneof(trainingRanges, fittableRanges),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.constantFrom(0.5, 0.01, 0.99, 1e-9),
        fc.integer({ min: 0, max: 10 }),
        ({ labels, predictors }, band, threshold, limit) => {
          const m = valueOrProblem(() => trainModel(labels, predictors, {}), "trainModel");
          if (!m || m.fit.diagnostics.some((d) => d.severity === "error")) return;
          const s = scoreRows(m, null, { threshold });
          const r = nearBoundaryRows(s.prediction, { band, threshold, limit });
          expect(r.scored + r.unscored).toBe(s.rows);
          expect(r.rows.length).toBe(Math.min(limit, r.total));
          expect(r.truncated).toBe(r.total > r.rows.length);
          if (m.kind === "binary") expect(r.withinBand + r.undecidedOnly).toBe(r.total);
          else expect(r.withinBand).toBe(r.total);
          for (let k = 0; k < r.rows.length; k++) {
            const row = r.rows[k];
            expect(Number.isFinite(row.margin) && Number.isFinite(row.probability)).toBe(true);
            expect(row.withinBand || row.undecided).toBe(true);
            if (row.withinBand) expect(row.margin).toBeLessThanOrEqual(band);
            if (k > 0) expect(row.margin).toBeGreaterThanOrEqual(r.rows[k - 1].margin);
          }
        },
      ),
      { seed: SEED, numRuns: RUNS.fit },
    );
  });

  test("scoring new rows of any content gives per-row NaN and a problem, or a whole-range catalogue problem", () => {
    const labels: Range = [["bought"], ...[0, 1, 0, 1, 1, 0, 1, 0, 0, 1].map((v) => [v])];
    const predictors: Range = [["visits", "region"], ...[3, 5, 1, 6, 4, 2, 7, 1, 3, 5].map((v, i) => [v + (i % 3) * 0.5, i % 2 ? "North" : "South"])];
    const binary = trainModel(labels, predictors, {});
    const multi = trainModel([["fruit"], ...["a", "b", "c", "a", "b", "c", "a", "b", "c", "a"].map((v) => [v])], predictors, { penalty: 1 });
    fc.assert(
      fc.property(grid(anyCell, 8, 3), fc.boolean(), (rows, useMulti) => {
        const m = useMulti ? multi : binary;
        const context = `scoreRows(${JSON.stringify(rows)})`;
        const s = valueOrProblem(() => scoreRows(m, rows), context);
        if (!s) return;
        for (let i = 0; i < s.rows; i++) {
          for (const a of s.prediction.probabilities) {
            const p = a[i];
            if (s.scored[i] ? !(p >= 0 && p <= 1) : !Number.isNaN(p)) throw new Error(`${context}: row ${i} probability ${p} (scored ${s.scored[i]})`);
          }
        }
      }),
      { seed: SEED, numRuns: RUNS.cheap },
    );
  });

  test("weights, offset and trials columns of any content give a checked model or a catalogue problem", () => {
    const n = 12;
    const labels: Range = [["y"], ...Array.from({ length: n }, (_, i) => [i % 3 === 0 ? 1 : 0])];
    const predictors: Range = [["x"], ...Array.from({ length: n }, (_, i) => [(i * 7) % 5])];
    const extra = fc.array(fc.oneof(anyCell, fc.constantFrom<number>(1e12, 1e-12, 0, -1, 2.5)), { minLength: n, maxLength: n }).map((v): Range => [["w"], ...v.map((c) => [c])]);
    fc.assert(
      fc.property(fc.constantFrom("weights", "offset", "trials"), extra, (key, cells) => {
        const context = `${key}=${JSON.stringify(cells)}`;
        const m = valueOrProblem(() => trainModel(labels, predictors, { [key]: cells }), context);
        if (!m) return;
        checkFit(m, context);
        checkScores(m, context);
      }),
      { seed: SEED, numRuns: RUNS.fit },
    );
  });

  test("label columns with 51 to 3,000 distinct labels are refused (TOO_MANY_LABELS) without fitting", () => {
    fc.assert(
      fc.property(fc.integer({ min: 51, max: 3000 }), fc.integer({ min: 0, max: 500 }), (distinct, repeats) => {
        const n = distinct + repeats;
        const labels: Range = [["id"], ...Array.from({ length: n }, (_, i) => [`L${i % distinct}`])];
        const predictors: Range = [["x"], ...Array.from({ length: n }, (_, i) => [(i * 37) % 101])];
        const start = performance.now();
        try {
          trainModel(labels, predictors, {});
          throw new Error(`${distinct} distinct labels were fitted`);
        } catch (e) {
          expectCatalogueError(e, `${distinct} labels`);
          expect(e.code).toBe("TOO_MANY_LABELS");
        }
        // Counting labels is linear; a fit would take seconds to hours.
        expect(performance.now() - start).toBeLessThan(1000);
      }),
      { seed: SEED, numRuns: 20 },
    );
  });

  test("text predictors with 101 to 3,000 distinct values are refused (TOO_MANY_LEVELS) without fitting", () => {
    fc.assert(
      fc.property(fc.integer({ min: 101, max: 3000 }), fc.integer({ min: 0, max: 500 }), (distinct, repeats) => {
        const n = distinct + repeats;
        const labels: Range = [["y"], ...Array.from({ length: n }, (_, i) => [(i * 7) % 3 === 0 ? "yes" : "no"])];
        const predictors: Range = [["id", "x"], ...Array.from({ length: n }, (_, i) => [`row ${i % distinct}`, (i * 37) % 101])];
        const start = performance.now();
        try {
          trainModel(labels, predictors, {});
          throw new Error(`${distinct} levels were fitted`);
        } catch (e) {
          expectCatalogueError(e, `${distinct} levels`);
          expect(e.code).toBe("TOO_MANY_LEVELS");
        }
        expect(performance.now() - start).toBeLessThan(1000);
      }),
      { seed: SEED, numRuns: 20 },
    );
  });

  test.each(["constructor", "toString", "__proto__", "hasOwnProperty", "valueOf"])(
    "a text predictor column headed %p (an Object.prototype member) is encoded like any other column",
    (name) => {
      const labels: Range = [["y"], [1], [0], [1], [0], [1], [0], [0], [1]];
      const predictors: Range = [[name, "x"], ["a", 1], ["b", 2], ["a", 3], ["b", 1], ["b", 5], ["a", 2], ["b", 4], ["a", 1]];
      const m = trainModel(labels, predictors, {});
      expect(m.fit.terms).toEqual(["(intercept)", `${name}=b`, "x"]);
      checkFit(m, name);
    },
  );

  test("a grouped (trials) fit with success counts outside 0..trials is BAD_TRIALS", () => {
    const labels: Range = [["s"], [1], [5], [2]];
    const predictors: Range = [["x"], [1], [2], [3]];
    try {
      trainModel(labels, predictors, { trials: [["t"], [3], [4], [4]] });
      throw new Error("expected BAD_TRIALS");
    } catch (e) {
      expectCatalogueError(e, "trials");
      expect(e.code).toBe("BAD_TRIALS");
    }
  });
});
