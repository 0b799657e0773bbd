import kmeansReference from "../../../fixtures/basis/sklearn-kmeans.json";
import { kMeans } from "../../../../src/engine/basis/kmeans";
import { seededUniform } from "../../../../src/engine/basis/prng";
import { applyRbf, fitRbf } from "../../../../src/engine/basis/rbf";

const col = (name: string, values: (number | string | null)[]) => ({ name, values });
const xs = [1, 2, 2.5, 3, 4, 5, 6, 7.5, 8, 9, 10, 12];

describe("seeded random numbers", () => {
  test("the same seed gives the same sequence; different seeds differ; values lie in [0, 1)", () => {
    const a = seededUniform(7);
    const b = seededUniform(7);
    const c = seededUniform(8);
    const sa = Array.from({ length: 1000 }, a);
    expect(Array.from({ length: 1000 }, b)).toEqual(sa);
    expect(Array.from({ length: 1000 }, c)).not.toEqual(sa);
    expect(sa.every((v) => v >= 0 && v < 1)).toBe(true);
    const mean = sa.reduce((s, v) => s + v, 0) / sa.length;
    // Mean of 1000 uniforms has SD 0.0091: 0.5 +- 4 SD.
    expect(Math.abs(mean - 0.5)).toBeLessThan(0.037);
  });
});

describe("k-means with k-means++ starts", () => {
  /** Centres are means of the same 25 points in both programs: agreement to rounding. */
  const CENTRE_AGREEMENT = 1e-12;
  const sortCentres = (c: number[][]) => [...c].sort((p, q) => p[0] - q[0] || p[1] - q[1]);

  test("finds the same three centres as scikit-learn's KMeans on well-separated blobs, for several seeds", () => {
    for (const seed of [1, 2, 3, 99]) {
      const got = sortCentres(kMeans(kmeansReference.points, 3, seed).centres);
      got.forEach((c, j) => c.forEach((v, t) => expect(Math.abs(v - kmeansReference.centres[j][t])).toBeLessThan(CENTRE_AGREEMENT)));
    }
  });

  test("is deterministic: same data, k and seed give identical centres and assignments", () => {
    const pts = xs.map((v, i) => [v, (i * 7) % 5]);
    expect(kMeans(pts, 4, 11)).toEqual(kMeans(pts, 4, 11));
  });

  test("returns fewer centres than k when there are fewer distinct points", () => {
    expect(kMeans([[1], [1], [2], [2]], 3, 1).centres).toHaveLength(2);
  });
});

describe("Gaussian radial basis", () => {
  test("one column with quantile centres: rbf(x)#1..#4 at the (j - 0.5)/4 quantiles of the standardized values", () => {
    const s = fitRbf([col("x", xs)], { k: 4 });
    expect(s.names).toEqual(["rbf(x)#1", "rbf(x)#2", "rbf(x)#3", "rbf(x)#4"]);
    expect(s.centreMethod).toBe("quantile");
    expect(s.centres.map((c) => c[0]).every((c, j, all) => j === 0 || c > all[j - 1])).toBe(true);
  });

  test("width rule: sigma = largest distance between centres / sqrt(2k)", () => {
    const s = fitRbf([col("x", xs)], { k: 4 });
    const cs = s.centres.map((c) => c[0]);
    expect(s.width).toBeCloseTo((Math.max(...cs) - Math.min(...cs)) / Math.sqrt(8), 14);
  });

  test("a row at a centre gets 1 in that column; values follow exp(-d^2 / (2 sigma^2)) on the standardized scale", () => {
    const s = fitRbf([col("x", xs)], { k: 3, width: 0.5 });
    const atCentre = s.centres[1][0] * s.sds[0] + s.means[0];
    const b = applyRbf(s, [col("x", [atCentre, atCentre + s.sds[0]])]);
    expect(b.columns[1][0]).toBeCloseTo(1, 14);
    const d = 1 + 0; // one SD away from centre 2, on the standardized scale
    expect(b.columns[1][1]).toBeCloseTo(Math.exp(-(d * d) / (2 * 0.25)), 12);
  });

  test("several columns use seeded k-means by default and are named rbf(x,y)#j; refitting gives the same state", () => {
    const ys = xs.map((v, i) => (i % 3) * 10 + v / 3);
    const s1 = fitRbf([col("x", xs), col("y", ys)], { k: 3, seed: 5 });
    const s2 = fitRbf([col("x", xs), col("y", ys)], { k: 3, seed: 5 });
    expect(s1.centreMethod).toBe("kmeans");
    expect(s1.names).toEqual(["rbf(x,y)#1", "rbf(x,y)#2", "rbf(x,y)#3"]);
    expect(s2).toEqual(s1);
  });

  test("quantile centres on several columns are refused with the alternative", () => {
    expect(() => fitRbf([col("x", xs), col("y", xs)], { k: 3, centres: "quantile" })).toThrow(/use centres=kmeans/);
  });

  test("tied values give fewer centres than asked, with a BASIS_REDUCED note", () => {
    const s = fitRbf([col("x", [1, 1, 1, 1, 1, 1, 2, 3])], { k: 4 });
    expect(s.centres.length).toBeLessThan(4);
    expect(s.fitNotes[0].code).toBe("BASIS_REDUCED");
  });

  test("new rows transformed alone equal the same rows transformed with the training rows", () => {
    const s = fitRbf([col("x", xs)], { k: 3 });
    const fresh = [0, 6.5, 20];
    const alone = applyRbf(s, [col("x", fresh)]).columns;
    const together = applyRbf(s, [col("x", [...xs, ...fresh])]).columns;
    alone.forEach((c, j) => expect(Array.from(together[j].subarray(xs.length))).toEqual(Array.from(c)));
  });

  test("a blank in any source column gives NaN in every rbf column of that row and a note", () => {
    const s = fitRbf([col("x", xs), col("y", xs.map((v) => v * v))], { k: 2 });
    const b = applyRbf(s, [col("x", [1, 2]), col("y", [null, 4])]);
    expect(b.columns.every((c) => Number.isNaN(c[0]) && Number.isFinite(c[1]))).toBe(true);
    expect(b.notes).toHaveLength(1);
  });
});
