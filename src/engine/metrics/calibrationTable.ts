import { problem } from "../messages";
import { checkBinaryInputs } from "./checkBinaryInputs";
import { distinctValueGroups } from "./distinctValueGroups";

/** Options of {@link calibrationTable} and {@link hosmerLemeshow}. */
export interface CalibrationTableOptions {
  /** Number of quantile groups requested, a whole number from 2 to 1000 [10, deciles]. */
  groups?: number;
  /** Case weights, finite and >= 0, one per row [all 1]; rows of weight 0 are left out. */
  weights?: Float64Array | null;
}

/** One group of the observed-vs-expected table. */
export interface CalibrationGroup {
  /** Smallest and largest predicted probability in the group. */
  lower: number;
  upper: number;
  /** Rows in the group (rows of weight 0 excluded) and their total weight. */
  rows: number;
  weight: number;
  /** Weighted count of positive rows, and the sum of w * p (the count the model expects). */
  observed: number;
  expected: number;
  /** observed / weight and expected / weight. */
  observedRate: number;
  meanPredicted: number;
}

/** The table with the grouping it used. */
export interface CalibrationTable {
  groups: CalibrationGroup[];
  requestedGroups: number;
  totalWeight: number;
  /** The grouping rule in words, for display next to the table. */
  rule: string;
}

/** The grouping rule, stated once and shown with every table. */
export const CALIBRATION_GROUPING_RULE =
  "Groups are intervals of predicted probability cut at the weighted inverse-ECDF (type-1) quantiles " +
  "j/g, j = 1..g-1: the cut j is the smallest predicted value whose cumulative weight reaches j/g of " +
  "the total. Duplicate cuts are merged, so fewer than g groups can result. Group 1 is [min, cut 1], " +
  "group r is (cut r-1, cut r]. Tied probabilities always stay in the same group.";

/**
 * Relative slack when comparing cumulative weight with j/g of the total, so an exact hit (e.g. 150
 * of 500 rows at 30%) is not missed through rounding of sums of fractional weights.
 */
const CUT_RELATIVE_SLACK = 1e-12;

/**
 * Observed-vs-expected calibration table by groups of predicted probability (deciles by default).
 *
 * Grouping rule (exact; see CALIBRATION_GROUPING_RULE): cuts at the weighted type-1 quantiles of the
 * predicted probabilities at j/g; duplicate cuts merged; intervals closed on the right, the first also
 * on the left; ties kept together. With unit weights this is R's
 * cut(p, unique(quantile(p, (0:g)/g, type = 1)), include.lowest = TRUE) computed in exact arithmetic
 * (and the "deciles of risk" of Hosmer & Lemeshow). Per group: observed = sum w y, expected = sum w p.
 *
 * Reference: Hosmer, Lemeshow & Sturdivant, Applied Logistic Regression, 3rd ed. (2013), section
 * 5.2.2; Hyndman & Fan (1996), "Sample quantiles in statistical packages", The American Statistician
 * 50:361-365, definition 1 (https://doi.org/10.2307/2684934); free: R documentation of
 * stats::quantile, type 1 (https://stat.ethz.ch/R-manual/R-devel/library/stats/html/quantile.html).
 *
 * @param labels - 1 for the positive class, 0 for the negative class
 * @param probabilities - probability of the positive class per row, in [0, 1]
 * @param options - number of groups and weights
 * @throws OddsmithError EMPTY_RANGE, RANGE_SHAPE_MISMATCH, METRIC_MISSING_VALUE, BAD_BINARY_LABEL,
 *   BAD_PROBABILITY, BAD_WEIGHT, ZERO_TOTAL_WEIGHT, BAD_OPTION_VALUE (groups)
 * @example
 * calibrationTable(new Float64Array([0, 0, 1, 1]), new Float64Array([0.1, 0.3, 0.6, 0.9]), { groups: 2 }).groups
 * // [{ lower: 0.1, upper: 0.3, rows: 2, observed: 0, expected: 0.4, ... }, { lower: 0.6, upper: 0.9, observed: 2, expected: 1.5, ... }]
 */
export function calibrationTable(
  labels: Float64Array,
  probabilities: Float64Array,
  options: CalibrationTableOptions = {},
): CalibrationTable {
  const g = options.groups ?? 10;
  if (!(Number.isInteger(g) && g >= 2 && g <= 1000)) {
    throw problem("BAD_OPTION_VALUE", { name: "groups", value: g, expected: "Give a whole number from 2 to 1000 (10 gives deciles)." });
  }
  const weights = options.weights ?? null;
  const checked = checkBinaryInputs(labels, probabilities, weights, "probability");
  const d = distinctValueGroups(labels, probabilities, weights);
  const m = d.values.length;
  const W = checked.totalWeight;
  // cuts[] holds indices into the distinct values: 0, the g-1 quantile cuts, m-1; duplicates merged.
  const cuts: number[] = [0];
  let cum = 0;
  let k = 0;
  for (let j = 1; j < g; j++) {
    const target = (j * W) / g - CUT_RELATIVE_SLACK * W;
    while (k < m && cum + d.positiveWeight[k] + d.negativeWeight[k] < target) {
      cum += d.positiveWeight[k] + d.negativeWeight[k];
      k++;
    }
    const cut = Math.min(k, m - 1);
    if (cut !== cuts[cuts.length - 1]) cuts.push(cut);
  }
  if (m - 1 !== cuts[cuts.length - 1]) cuts.push(m - 1);
  const groups: CalibrationGroup[] = [];
  // A single distinct value gives one group holding every row.
  const intervals = cuts.length === 1 ? [[0, 0]] : cuts.slice(1).map((end, r) => [r === 0 ? 0 : cuts[r] + 1, end]);
  for (const [from, to] of intervals) {
    let rows = 0;
    let weight = 0;
    let observed = 0;
    let expected = 0;
    for (let q = from; q <= to; q++) {
      const w = d.positiveWeight[q] + d.negativeWeight[q];
      rows += d.rowCount[q];
      weight += w;
      observed += d.positiveWeight[q];
      expected += w * d.values[q];
    }
    groups.push({
      lower: d.values[from],
      upper: d.values[to],
      rows,
      weight,
      observed,
      expected,
      observedRate: observed / weight,
      meanPredicted: expected / weight,
    });
  }
  return { groups, requestedGroups: g, totalWeight: W, rule: CALIBRATION_GROUPING_RULE };
}
