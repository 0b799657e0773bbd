import fc from "fast-check";
import { DEFAULT_BOUNDARY_LIMIT, nearBoundaryRows } from "../../../src/engine/boundary";
import { OddsmithError } from "../../../src/engine/messages";
import type { Prediction } from "../../../src/engine/types";

function binaryPrediction(p: number[], lower?: number[], upper?: number[]): Prediction {
  const p1 = Float64Array.from(p);
  return {
    probabilities: [p1.map((v) => 1 - v), p1],
    predicted: new Int32Array(p.length),
    margin: new Float64Array(p.length),
    lower: lower ? Float64Array.from(lower) : undefined,
    upper: upper ? Float64Array.from(upper) : undefined,
  };
}

function multiPrediction(rows: number[][]): Prediction {
  const k = rows[0].length;
  const probabilities = Array.from({ length: k }, (_, c) => Float64Array.from(rows.map((r) => r[c])));
  return { probabilities, predicted: new Int32Array(rows.length), margin: new Float64Array(rows.length) };
}

/** Plain reference: select, then sort everything by (margin, row). */
function naiveBinary(p: number[], threshold: number, band: number, lower?: number[], upper?: number[]) {
  const out: { row: number; margin: number }[] = [];
  p.forEach((v, i) => {
    if (Number.isNaN(v)) return;
    const m = Math.abs(v - threshold);
    const und = lower !== undefined && upper !== undefined && lower[i] <= threshold && upper[i] >= threshold;
    if (m <= band || und) out.push({ row: i, margin: m });
  });
  return out.sort((a, b) => a.margin - b.margin || a.row - b.row);
}

describe("nearBoundaryRows, binary models", () => {
  test("lists rows whose probability lies within the band of the threshold, closest first", () => {
    const r = nearBoundaryRows(binaryPrediction([0.1, 0.48, 0.9, 0.55, 0.5]), { band: 0.1 });
    expect(r.kind).toBe("binary");
    expect(r.rows.map((x) => x.row)).toEqual([4, 1, 3]);
    expect(r.rows.map((x) => x.margin)).toEqual([0, expect.closeTo(0.02, 12), expect.closeTo(0.05, 12)]);
    expect(r.total).toBe(3);
    expect(r.withinBand).toBe(3);
    expect(r.truncated).toBe(false);
  });

  test("uses the given threshold, not 0.5", () => {
    const r = nearBoundaryRows(binaryPrediction([0.1, 0.48, 0.22, 0.3]), { threshold: 0.25, band: 0.06 });
    expect(r.rows.map((x) => x.row)).toEqual([2, 3]);
    expect(r.rows[0].predicted).toBe(0);
    expect(r.rows[1].predicted).toBe(1);
    expect(r.threshold).toBe(0.25);
  });

  test("a row exactly at threshold + band is included (the band is closed)", () => {
    // 0.75 and 0.25 are exact in binary floating point, so |p - 0.5| equals the band exactly.
    const r = nearBoundaryRows(binaryPrediction([0.75, 0.25, 0.76]), { band: 0.25 });
    expect(r.rows.map((x) => x.row)).toEqual([0, 1]);
  });

  test("band 0 keeps only rows exactly on the threshold", () => {
    const r = nearBoundaryRows(binaryPrediction([0.5, 0.5000001, 0.5]), { band: 0 });
    expect(r.rows.map((x) => x.row)).toEqual([0, 2]);
  });

  test("ties in margin are listed in row order", () => {
    const r = nearBoundaryRows(binaryPrediction([0.6, 0.4, 0.6, 0.4]), { band: 0.2 });
    expect(r.rows.map((x) => x.row)).toEqual([0, 1, 2, 3]);
  });

  test("rows whose interval contains the threshold are flagged as undecided, also outside the band", () => {
    const p = [0.3, 0.45, 0.7, 0.9];
    const lower = [0.1, 0.4, 0.3, 0.8];
    const upper = [0.45, 0.55, 0.85, 0.95];
    const r = nearBoundaryRows(binaryPrediction(p, lower, upper), { band: 0.1 });
    expect(r.rows.map((x) => [x.row, x.withinBand, x.undecided])).toEqual([
      [1, true, true],
      [2, false, true],
    ]);
    expect(r.undecided).toBe(2);
    expect(r.undecidedOnly).toBe(1);
    expect(r.withinBand).toBe(1);
    expect(r.total).toBe(2);
  });

  test("an interval whose end touches the threshold counts as containing it", () => {
    const r = nearBoundaryRows(binaryPrediction([0.8], [0.5], [0.9]), { band: 0.01 });
    expect(r.rows).toHaveLength(1);
    expect(r.rows[0].undecided).toBe(true);
  });

  test("undecided: false lists only the band", () => {
    const r = nearBoundaryRows(binaryPrediction([0.7], [0.3], [0.85]), { band: 0.1, undecided: false });
    expect(r.total).toBe(0);
    expect(r.undecided).toBe(0);
  });

  test("without intervals the interval test is reported as unavailable, not silently empty", () => {
    const r = nearBoundaryRows(binaryPrediction([0.45]), { band: 0.1 });
    expect(r.intervalsAvailable).toBe(false);
    expect(r.rows).toHaveLength(1);
  });

  test("NaN intervals (no covariance) never mark a row undecided", () => {
    const r = nearBoundaryRows(binaryPrediction([0.8], [NaN], [NaN]), { band: 0.1 });
    expect(r.total).toBe(0);
  });

  test("rows that could not be scored are counted and never listed", () => {
    const r = nearBoundaryRows(binaryPrediction([NaN, 0.5, NaN]), { band: 1 });
    expect(r.unscored).toBe(2);
    expect(r.scored).toBe(1);
    expect(r.rows.map((x) => x.row)).toEqual([1]);
  });

  test("matches a plain select-and-sort reference on random inputs", () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { maxLength: 60 }),
        fc.double({ min: 0.01, max: 0.99, noNaN: true }),
        fc.double({ min: 0, max: 0.5, noNaN: true }),
        (p, threshold, band) => {
          const lower = p.map((v) => Math.max(0, v - 0.05));
          const upper = p.map((v) => Math.min(1, v + 0.05));
          const r = nearBoundaryRows(binaryPrediction(p, lower, upper), { threshold, band });
          const expected = naiveBinary(p, threshold, band, lower, upper);
          expect(r.rows.map((x) => x.row)).toEqual(expected.map((x) => x.row));
          expect(r.total).toBe(expected.length);
        },
      ),
      { numRuns: 200, seed: 20261201 },
    );
  });
});

describe("nearBoundaryRows, several classes", () => {
  test("uses the gap between the two most likely classes", () => {
    const r = nearBoundaryRows(
      multiPrediction([
        [0.4, 0.35, 0.25], // gap 0.05
        [0.8, 0.1, 0.1], // gap 0.7
        [0.2, 0.38, 0.42], // gap 0.04
      ]),
      { band: 0.1 },
    );
    expect(r.kind).toBe("multiclass");
    expect(r.rows.map((x) => [x.row, x.predicted, x.runnerUp])).toEqual([
      [2, 2, 1],
      [0, 0, 1],
    ]);
    expect(r.rows[0].margin).toBeCloseTo(0.04, 12);
    expect(r.rows[0].probability).toBe(0.42);
    expect(Number.isNaN(r.threshold)).toBe(true);
  });

  test("the interval test does not apply: undecided counts stay zero", () => {
    const r = nearBoundaryRows(multiPrediction([[0.34, 0.33, 0.33]]), { band: 0.1 });
    expect(r.undecided).toBe(0);
    expect(r.rows[0].undecided).toBe(false);
    expect(r.intervalsAvailable).toBe(true);
  });

  test("a row with any NaN class probability is unscored", () => {
    const r = nearBoundaryRows(multiPrediction([[0.34, NaN, 0.33], [0.4, 0.3, 0.3]]), { band: 1 });
    expect(r.unscored).toBe(1);
    expect(r.rows.map((x) => x.row)).toEqual([1]);
  });
});

describe("nearBoundaryRows, capped lists", () => {
  test("lists at most `limit` rows, the closest ones, and keeps the full count", () => {
    const p = [0.59, 0.51, 0.45, 0.52, 0.75, 0.5];
    const r = nearBoundaryRows(binaryPrediction(p), { band: 0.2, limit: 3 });
    expect(r.rows.map((x) => x.row)).toEqual([5, 1, 3]);
    expect(r.total).toBe(5);
    expect(r.truncated).toBe(true);
  });

  test("a cap that falls inside a run of equal margins keeps the earliest rows", () => {
    const r = nearBoundaryRows(binaryPrediction([0.6, 0.4, 0.6, 0.4, 0.5]), { band: 0.2, limit: 3 });
    expect(r.rows.map((x) => x.row)).toEqual([4, 0, 1]);
  });

  test("limit 0 lists nothing but still counts", () => {
    const r = nearBoundaryRows(binaryPrediction([0.5, 0.55]), { band: 0.1, limit: 0 });
    expect(r.rows).toEqual([]);
    expect(r.total).toBe(2);
    expect(r.truncated).toBe(true);
  });

  test("the capped list equals the head of the uncapped list on random inputs", () => {
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: 0, max: 20 }).map((v) => v / 20), { minLength: 1, maxLength: 80 }),
        fc.integer({ min: 1, max: 30 }),
        (p, limit) => {
          const full = nearBoundaryRows(binaryPrediction(p), { band: 0.3, limit: 1000 });
          const capped = nearBoundaryRows(binaryPrediction(p), { band: 0.3, limit });
          expect(capped.rows).toEqual(full.rows.slice(0, limit));
          expect(capped.total).toBe(full.total);
        },
      ),
      { numRuns: 200, seed: 7 },
    );
  });

  test("the default cap is DEFAULT_BOUNDARY_LIMIT", () => {
    const p = new Array(DEFAULT_BOUNDARY_LIMIT + 10).fill(0.5);
    const r = nearBoundaryRows(binaryPrediction(p), { band: 0.1 });
    expect(r.rows).toHaveLength(DEFAULT_BOUNDARY_LIMIT);
    expect(r.total).toBe(DEFAULT_BOUNDARY_LIMIT + 10);
  });
});

describe("nearBoundaryRows, input checks", () => {
  test.each([
    ["threshold", { threshold: 0, band: 0.1 }],
    ["threshold", { threshold: 1, band: 0.1 }],
    ["threshold", { threshold: NaN, band: 0.1 }],
    ["band", { band: -0.1 }],
    ["band", { band: 1.5 }],
    ["band", { band: NaN }],
    ["limit", { band: 0.1, limit: -1 }],
    ["limit", { band: 0.1, limit: 2.5 }],
  ])("rejects a bad %s with a message that names it", (name, options) => {
    let error: unknown;
    try {
      nearBoundaryRows(binaryPrediction([0.5]), options);
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(OddsmithError);
    expect((error as OddsmithError).code).toBe("BAD_OPTION_VALUE");
    expect((error as OddsmithError).message).toContain(`option ${name}`);
  });

  test("an empty prediction gives empty counts", () => {
    const r = nearBoundaryRows(binaryPrediction([]), { band: 0.1 });
    expect([r.total, r.scored, r.rows.length]).toEqual([0, 0, 0]);
  });
});

/** Speed at this size is measured by the benchmark (bench/, case "boundary"), not here: tests are not timed. */
describe("nearBoundaryRows at 1,000,000 rows", () => {
  function lcg(seed: number): () => number {
    let s = seed >>> 0;
    return () => {
      s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
      return s / 4294967296;
    };
  }

  test("lists the closest rows first and counts every borderline binary row", () => {
    const n = 1_000_000;
    const rand = lcg(42);
    const p1 = new Float64Array(n);
    const lower = new Float64Array(n);
    const upper = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      p1[i] = rand();
      lower[i] = Math.max(0, p1[i] - 0.03);
      upper[i] = Math.min(1, p1[i] + 0.03);
    }
    const prediction: Prediction = {
      probabilities: [p1.map((v) => 1 - v), p1],
      predicted: new Int32Array(n),
      margin: new Float64Array(n),
      lower,
      upper,
    };
    const r = nearBoundaryRows(prediction, { band: 0.2 });
    expect(r.total).toBeGreaterThan(350_000); // about 40% of uniform p lie within 0.2 of 0.5
    expect(r.rows).toHaveLength(DEFAULT_BOUNDARY_LIMIT);
    expect(r.rows[0].margin).toBeLessThanOrEqual(r.rows[r.rows.length - 1].margin);
  });

  test("counts borderline rows of 4 classes", () => {
    const n = 1_000_000;
    const rand = lcg(7);
    const probabilities = Array.from({ length: 4 }, () => new Float64Array(n));
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let c = 0; c < 4; c++) s += probabilities[c][i] = rand() + 1e-9;
      for (let c = 0; c < 4; c++) probabilities[c][i] /= s;
    }
    const prediction: Prediction = { probabilities, predicted: new Int32Array(n), margin: new Float64Array(n) };
    const r = nearBoundaryRows(prediction, { band: 0.05 });
    expect(r.total).toBeGreaterThan(0);
  });
});
