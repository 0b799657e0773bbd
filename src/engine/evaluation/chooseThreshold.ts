/**
 * Threshold choice for a binary classifier: the probability cut-off that minimizes expected
 * misclassification cost, or the one that reaches a target sensitivity, or the one that flags at
 * most a given number of rows (a review budget).
 *
 * Policy:
 * - A row is flagged (predicted positive) when p >= threshold, as in confusionCounts.
 * - Candidates are the distinct probabilities of the rows, plus "flag nothing" (threshold 1 when no
 *   probability equals 1). Each candidate is scored by one sweep over the rows sorted by probability,
 *   so the work is rows x log(rows).
 * - Cost rule: cost = costRatio x FP + FN (a false negative costs 1, a false positive costs
 *   costRatio), weighted; the expected cost is that sum over the total weight. Ties go to the higher
 *   threshold (fewer rows flagged).
 * - Sensitivity rule: the highest threshold whose sensitivity TP / (TP + FN) is >= the target.
 * - Budget rule: the lowest threshold that flags at most `budget` rows (rows counted, not weights);
 *   rows tied at the cut-off are kept together, so fewer than `budget` may be flagged.
 */
import { checkBinaryInputs } from "../metrics/checkBinaryInputs";
import { checkOptionValue } from "../metrics/checkOptionValue";
import { confusionCounts, type ConfusionCounts } from "../metrics/confusionCounts";
import { problem } from "../messages";

/** How the threshold is chosen. */
export type ThresholdRule =
  | { rule: "cost"; costRatio: number }
  | { rule: "sensitivity"; target: number }
  | { rule: "budget"; budget: number };

/** The chosen threshold with the confusion counts at it. */
export interface ThresholdChoice {
  rule: ThresholdRule["rule"];
  threshold: number;
  /** Rows flagged (p >= threshold), counted without weights. */
  flaggedRows: number;
  /** Expected cost per unit weight at the threshold (cost rule; else computed with ratio 1). */
  expectedCost: number;
  /** Cost ratio used for expectedCost. */
  costRatio: number;
  counts: ConfusionCounts;
}

/** One candidate of the sweep: threshold and the weighted counts of flagged rows at it. */
interface Candidate {
  threshold: number;
  flaggedRows: number;
  tp: number;
  fp: number;
}

/** All candidates, from "flag nothing" down to "flag everything" (thresholds decreasing). */
function sweep(labels: Float64Array, p: Float64Array, weights: Float64Array | null): Candidate[] {
  const order = Array.from(p.keys()).sort((a, b) => p[b] - p[a]);
  const out: Candidate[] = [];
  if (p[order[0]] < 1) out.push({ threshold: 1, flaggedRows: 0, tp: 0, fp: 0 });
  let tp = 0;
  let fp = 0;
  for (let k = 0; k < order.length; k++) {
    const i = order[k];
    const w = weights ? weights[i] : 1;
    if (labels[i] === 1) tp += w;
    else fp += w;
    // Rows tied on probability enter together: a candidate closes only where the value changes.
    if (k + 1 === order.length || p[order[k + 1]] !== p[i]) out.push({ threshold: p[i], flaggedRows: k + 1, tp, fp });
  }
  return out;
}

function pick(c: Candidate[], rule: ThresholdRule, positive: number): Candidate {
  if (rule.rule === "cost") {
    let best = c[0];
    let bestCost = rule.costRatio * best.fp + (positive - best.tp);
    for (const x of c) {
      const cost = rule.costRatio * x.fp + (positive - x.tp);
      // Strictly lower only: ties keep the higher threshold seen first.
      if (cost < bestCost - 1e-12 * Math.max(1, Math.abs(bestCost))) {
        best = x;
        bestCost = cost;
      }
    }
    return best;
  }
  if (rule.rule === "sensitivity") {
    for (const x of c) if (x.tp >= rule.target * positive - 1e-12 * positive) return x;
    return c[c.length - 1];
  }
  let best = c[0];
  for (const x of c) if (x.flaggedRows <= rule.budget) best = x;
  return best;
}

/**
 * Choose a decision threshold from labels and positive-class probabilities.
 *
 * Method: the cost rule is the Bayes decision rule evaluated empirically over every distinct
 * cut-off (Elkan 2001, "The foundations of cost-sensitive learning", IJCAI, section 2: with costs
 * c_FP and c_FN the optimal cut-off for calibrated probabilities is c_FP / (c_FP + c_FN)); the
 * sensitivity and budget rules read the ROC curve's operating points (Fawcett 2006, "An introduction
 * to ROC analysis", Pattern Recognition Letters 27:861-874, sections 4-5).
 *
 * @param labels 1 for the positive class, 0 otherwise
 * @param probabilities probability of the positive class per row
 * @param rule cost (costRatio = cost of a false positive / cost of a false negative, > 0),
 *   sensitivity (target in [0, 1]) or budget (whole number of rows >= 0)
 * @param weights optional case weights
 * @throws OddsmithError BAD_OPTION_VALUE for a rule value out of range, and the checks of
 *   checkBinaryInputs
 * @example
 * chooseThreshold(new Float64Array([1, 0, 1, 0]), new Float64Array([0.9, 0.8, 0.6, 0.2]), { rule: "budget", budget: 2 })
 * // threshold 0.8, flaggedRows 2, counts.truePositives 1
 */
export function chooseThreshold(
  labels: Float64Array,
  probabilities: Float64Array,
  rule: ThresholdRule,
  weights: Float64Array | null = null,
): ThresholdChoice {
  const checked = checkBinaryInputs(labels, probabilities, weights, "probability");
  if (rule.rule === "cost") checkOptionValue("cost", rule.costRatio, 1, 0, Infinity, false);
  if (rule.rule === "sensitivity") checkOptionValue("sensitivity", rule.target, 1, 0, 1, true);
  if (rule.rule === "budget" && !(Number.isInteger(rule.budget) && rule.budget >= 0)) {
    throw problem("BAD_OPTION_VALUE", { name: "budget", value: rule.budget, expected: "Give a whole number of rows, 0 or more." });
  }
  const candidates = sweep(labels, probabilities, weights);
  const chosen = pick(candidates, rule, checked.positiveWeight);
  const costRatio = rule.rule === "cost" ? rule.costRatio : 1;
  const fn = checked.positiveWeight - chosen.tp;
  return {
    rule: rule.rule,
    threshold: chosen.threshold,
    flaggedRows: chosen.flaggedRows,
    expectedCost: (costRatio * chosen.fp + fn) / checked.totalWeight,
    costRatio,
    counts: confusionCounts(labels, probabilities, { threshold: chosen.threshold, weights }),
  };
}
