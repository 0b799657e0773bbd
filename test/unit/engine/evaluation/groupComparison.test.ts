import { MAX_GROUPS, compareGroups, groupsOf } from "../../../../src/engine/evaluation/groupComparison";
import { nearBoundaryRows } from "../../../../src/engine/boundary";
import { readTable } from "../../../../src/engine/data/table";
import { confusionCounts } from "../../../../src/engine/metrics/confusionCounts";
import { DEFAULT_REVIEW } from "../../../../src/taskpane/review";

/*
 * Hand-computed table: 10 rows in two groups, threshold 0.5 (flagged when p >= 0.5), band 0.1.
 *
 *   group A (6 rows)                       group B (4 rows)
 *   y  p     flagged  |p - 0.5|            y  p     flagged  |p - 0.5|
 *   1  0.90  yes TP   0.40                 1  0.80  yes TP   0.30
 *   1  0.55  yes TP   0.05  borderline     0  0.58  yes FP   0.08  borderline
 *   0  0.62  yes FP   0.12                 0  0.35  no  TN   0.15
 *   0  0.20  no  TN   0.30                 0  0.10  no  TN   0.40
 *   1  0.30  no  FN   0.20
 *   0  0.45  no  TN   0.05  borderline
 *
 *   A: positives 3, observed 3/6 = 0.5, mean predicted 3.02/6 = 0.503333.., observed - predicted
 *      -0.003333.., sensitivity 2/3, specificity 2/3, positive rate 3/6 = 0.5, borderline 2 (share 1/3)
 *   B: positives 1, observed 1/4 = 0.25, mean predicted 1.83/4 = 0.4575, observed - predicted -0.2075,
 *      sensitivity 1/1, specificity 2/3, positive rate 2/4 = 0.5, borderline 1 (share 1/4)
 *   all: 10 rows, positives 4 (0.4), mean predicted 4.85/10 = 0.485, sensitivity 3/4, specificity 4/6,
 *      positive rate 5/10, borderline 3
 *   Reference = the largest group, A. Ratios B / A: observed 0.25/0.5 = 0.5, mean predicted
 *   (1.83/4)/(3.02/6) = 10.98/12.08, sensitivity 1/(2/3) = 1.5, specificity 1, positive rate 1,
 *   borderline share (1/4)/(1/3) = 0.75.
 */
const y = Float64Array.from([1, 1, 0, 0, 1, 0, 1, 0, 0, 0]);
const p = Float64Array.from([0.9, 0.55, 0.62, 0.2, 0.3, 0.45, 0.8, 0.58, 0.35, 0.1]);
const groups = { codes: Int32Array.from([0, 0, 0, 0, 0, 0, 1, 1, 1, 1]), names: ["A", "B"] };
/** Sums of a few two-decimal numbers: exact to rounding. */
const EXACT = 12;

describe("compareGroups against the hand-computed table", () => {
  const r = compareGroups(y, p, groups);

  test("per-group figures", () => {
    const [a, b] = r.groups;
    expect([a.group, a.rows, a.positives, a.borderline, b.group, b.rows, b.positives, b.borderline]).toEqual(["A", 6, 3, 2, "B", 4, 1, 1]);
    const close = (got: number, want: number) => expect(got).toBeCloseTo(want, EXACT);
    close(a.observedRate, 0.5);
    close(a.meanPredicted, 3.02 / 6);
    close(a.calibrationInTheLarge, 0.5 - 3.02 / 6);
    close(a.sensitivity, 2 / 3);
    close(a.specificity, 2 / 3);
    close(a.positiveRate, 0.5);
    close(a.borderlineShare, 1 / 3);
    close(b.observedRate, 0.25);
    close(b.meanPredicted, 0.4575);
    close(b.calibrationInTheLarge, -0.2075);
    close(b.sensitivity, 1);
    close(b.specificity, 2 / 3);
    close(b.positiveRate, 0.5);
    close(b.borderlineShare, 0.25);
  });

  test("all rows together", () => {
    expect([r.all.group, r.all.rows, r.all.positives, r.all.borderline]).toEqual(["all rows", 10, 4, 3]);
    expect(r.all.meanPredicted).toBeCloseTo(0.485, EXACT);
    expect(r.all.sensitivity).toBeCloseTo(0.75, EXACT);
    expect(r.all.specificity).toBeCloseTo(4 / 6, EXACT);
    expect(r.all.positiveRate).toBeCloseTo(0.5, EXACT);
  });

  test("ratios against the largest group (A); A's own ratios are 1", () => {
    expect(r.reference).toBe(0);
    expect(Object.values(r.ratios[0]).every((v) => Math.abs(v - 1) < 1e-15)).toBe(true);
    const b = r.ratios[1];
    expect(b.observedRate).toBeCloseTo(0.5, EXACT);
    expect(b.meanPredicted).toBeCloseTo(10.98 / 12.08, EXACT);
    expect(b.sensitivity).toBeCloseTo(1.5, EXACT);
    expect(b.specificity).toBeCloseTo(1, EXACT);
    expect(b.positiveRate).toBeCloseTo(1, EXACT);
    expect(b.borderlineShare).toBeCloseTo(0.75, EXACT);
  });

  test("a named reference group (any case) turns the ratios round; an unknown one is refused", () => {
    const vsB = compareGroups(y, p, groups, { reference: "b" });
    expect(vsB.reference).toBe(1);
    expect(vsB.ratios[0].sensitivity).toBeCloseTo((2 / 3) / 1, EXACT);
    expect(vsB.ratios[0].borderlineShare).toBeCloseTo((1 / 3) / 0.25, EXACT);
    expect(() => compareGroups(y, p, groups, { reference: "C" })).toThrow('The group "C" given as versus does not occur in the group column among the rows used. Groups found: "A" and "B".');
  });

  test("with probability intervals, a row whose interval holds the threshold is borderline too (the pane's rule)", () => {
    // Row 3 (A, p 0.62, outside the band) gets the interval [0.45, 0.75]; every other interval is narrow.
    const lower = p.map((v) => v - 0.01);
    const upper = p.map((v) => v + 0.01);
    lower[2] = 0.45;
    upper[2] = 0.75;
    const withIntervals = compareGroups(y, p, groups, { lower, upper });
    expect(withIntervals.intervals).toBe(true);
    expect(withIntervals.groups.map((g) => g.borderline)).toEqual([3, 1]);
  });

  test("threshold and band move the counts: threshold 0.6, band 0.05", () => {
    const moved = compareGroups(y, p, groups, { threshold: 0.6, band: 0.05 });
    // A flagged: 0.90, 0.62 (TP 1 of 3 positives, FP 1 of 3 negatives); borderline |p - 0.6| <= 0.05: 0.55, 0.62.
    expect(moved.groups[0].sensitivity).toBeCloseTo(1 / 3, EXACT);
    expect(moved.groups[0].positiveRate).toBeCloseTo(2 / 6, EXACT);
    expect(moved.groups[0].borderline).toBe(2);
    // B: 0.58 is within 0.05 of 0.6 and no longer flagged.
    expect(moved.groups[1].positiveRate).toBeCloseTo(1 / 4, EXACT);
    expect(moved.groups[1].borderline).toBe(1);
  });

  test("a group without positive rows: sensitivity undefined (NaN), its ratio too, with a note", () => {
    const y2 = Float64Array.from([1, 1, 0, 0, 1, 0, 0, 0, 0, 0]);
    const r2 = compareGroups(y2, p, groups);
    expect(Number.isNaN(r2.groups[1].sensitivity)).toBe(true);
    expect(Number.isNaN(r2.ratios[1].sensitivity)).toBe(true);
    expect(r2.diagnostics.map((d) => d.code)).toContain("GROUP_RATE_UNDEFINED");
    expect(r2.diagnostics.find((d) => d.code === "GROUP_RATE_UNDEFINED")?.message).toMatch(/^1 group has no positive rows \("B"\), so its sensitivity is undefined/);
  });

  test("groups under 30 rows get the small-groups note", () => {
    expect(r.diagnostics.find((d) => d.code === "SMALL_GROUPS")?.message).toMatch(/^2 groups have fewer than 30 rows \("A" and "B"\)/);
  });
});

describe("compareGroups agrees with the metrics run on each group's rows", () => {
  // 300 rows of a seeded generator, three groups of unequal size; labels drawn from p itself.
  let seed = 20261202;
  const rand = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  const n = 300;
  const pr = Float64Array.from({ length: n }, () => rand());
  const yr = pr.map((v) => (rand() < v ? 1 : 0));
  const codes = Int32Array.from({ length: n }, () => (rand() < 0.5 ? 0 : rand() < 0.6 ? 1 : 2));
  const result = compareGroups(yr, pr, { codes, names: ["g0", "g1", "g2"] }, { threshold: 0.4, band: 0.07 });

  test.each([0, 1, 2])("group %i: confusionCounts and nearBoundaryRows on its subset", (k) => {
    const idx = Array.from(codes.keys()).filter((i) => codes[i] === k);
    const ys = Float64Array.from(idx, (i) => yr[i]);
    const ps = Float64Array.from(idx, (i) => pr[i]);
    const c = confusionCounts(ys, ps, { threshold: 0.4 });
    const b = nearBoundaryRows({ probabilities: [ps.map((v) => 1 - v), ps], predicted: new Int32Array(idx.length), margin: new Float64Array(idx.length) }, { threshold: 0.4, band: 0.07, undecided: false });
    const g = result.groups[k];
    expect(g.rows).toBe(idx.length);
    expect(g.sensitivity).toBe(c.sensitivity);
    expect(g.specificity).toBe(c.specificity);
    expect(g.positiveRate).toBeCloseTo((c.truePositives + c.falsePositives) / idx.length, 14);
    expect(g.borderline).toBe(b.total);
    expect(g.observedRate).toBeCloseTo(ys.reduce((s, v) => s + v, 0) / idx.length, 14);
  });

  test("the counts add up to all rows", () => {
    expect(result.groups.reduce((s, g) => s + g.rows, 0)).toBe(n);
    expect(result.groups.reduce((s, g) => s + g.borderline, 0)).toBe(result.all.borderline);
    expect(result.groups.reduce((s, g) => s + g.positives, 0)).toBe(result.all.positives);
  });

  test("the default band is the pane's review band", () => {
    expect(compareGroups(yr, pr, { codes, names: ["g0", "g1", "g2"] }).band).toBe(DEFAULT_REVIEW.band);
  });
});

describe("groupsOf", () => {
  const column = (cells: unknown[]) => readTable(cells.map((v) => [v]) as never, { argument: "group", headers: "no" }).columns[0];

  test("text: trimmed, case kept, sorted case-insensitively", () => {
    const g = groupsOf(column(["south", " North", "North ", "east"]), [0, 1, 2, 3]);
    expect(g.names).toEqual(["east", "North", "south"]);
    expect(Array.from(g.codes)).toEqual([2, 1, 1, 0]);
  });

  test("numbers by value, booleans as TRUE/FALSE", () => {
    expect(groupsOf(column([10, 2, 10, 1]), [0, 1, 2, 3]).names).toEqual(["1", "2", "10"]);
    expect(groupsOf(column([true, false, true]), [0, 1, 2]).names).toEqual(["FALSE", "TRUE"]);
  });

  test("only the rows asked for, and more than MAX_GROUPS values refused", () => {
    expect(groupsOf(column(["a", "b", "c"]), [2, 0]).names).toEqual(["a", "c"]);
    const ids = Array.from({ length: MAX_GROUPS + 1 }, (_, i) => `id${i}`);
    expect(() => groupsOf(column(ids), ids.map((_, i) => i))).toThrow(/more than 100 different values across 101 rows/);
  });
});
