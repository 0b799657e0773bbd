import { chiSquareSurvival } from "../distributions";
import { problem } from "../messages";
import type { Diagnostic } from "../types";
import { calibrationTable, type CalibrationGroup, type CalibrationTableOptions } from "./calibrationTable";
import { makeDiagnostic } from "./makeDiagnostic";

/** Options of {@link hosmerLemeshow}. */
export interface HosmerLemeshowOptions extends CalibrationTableOptions {
  /**
   * "development" when the probabilities come from a model fitted to these same rows (df = G - 2,
   * Hosmer & Lemeshow 1980); "external" for probabilities from elsewhere, judged on new rows
   * (df = G, Hosmer, Lemeshow & Sturdivant 2013, section 5.2.2) ["development"].
   */
  sample?: "development" | "external";
}

/** The Hosmer-Lemeshow test with the table it was computed from. */
export interface HosmerLemeshowResult {
  statistic: number;
  df: number;
  p: number;
  /** Groups actually formed (can be fewer than requested when many rows share a value). */
  groupCount: number;
  requestedGroups: number;
  sample: "development" | "external";
  groups: CalibrationGroup[];
  /** The grouping rule in words. */
  rule: string;
  diagnostics: Diagnostic[];
}

/** Expected counts below this make the chi-square approximation doubtful (Hosmer et al. 2013, 5.2.2). */
const SMALL_EXPECTED = 5;

/**
 * Hosmer-Lemeshow goodness-of-fit statistic over groups of predicted probability.
 *
 * Formula: C = sum_g [ (O_g - E_g)^2 / E_g + ((n_g - O_g) - (n_g - E_g))^2 / (n_g - E_g) ]
 *            = sum_g (O_g - E_g)^2 / (n_g pbar_g (1 - pbar_g)),
 * with n_g the group weight, O_g the weighted positives, E_g = sum w p, pbar_g = E_g / n_g. Groups are
 * those of {@link calibrationTable} (deciles by default, weighted type-1 quantile cuts, ties kept
 * together, duplicate cuts merged), G = groups formed. p = P(chi-square(df) > C), df = G - 2 for a
 * development sample, G for an external one. A cell with expected 0 adds 0 when its observed count is
 * also 0 and makes C infinite (p = 0) otherwise. Needs df >= 1.
 *
 * References: Hosmer & Lemeshow (1980), "Goodness of fit tests for the multiple logistic regression
 * model", Communications in Statistics A9:1043-1069; Hosmer, Lemeshow & Sturdivant, Applied Logistic
 * Regression, 3rd ed. (2013), section 5.2.2 (grouping by deciles of risk; df for external samples);
 * free summary: https://en.wikipedia.org/wiki/Hosmer%E2%80%93Lemeshow_test.
 *
 * @param labels - 1 for the positive class, 0 for the negative class
 * @param probabilities - probability of the positive class per row, in [0, 1]
 * @param options - groups [10], weights, sample ["development"]
 * @throws OddsmithError as calibrationTable, plus BAD_OPTION_VALUE (sample) and
 *   TOO_FEW_CALIBRATION_GROUPS when fewer groups form than df >= 1 needs
 * @example
 * const y = Float64Array.of(0, 0, 1, 0, 1, 1, 0, 1, 1, 1);
 * const p = Float64Array.of(0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.85, 0.9);
 * const r = hosmerLemeshow(y, p, { groups: 5, sample: "external" });
 * // five groups of two rows; r.statistic 3.1395, r.df 5, r.p 0.6785 (R by hand: 3.139488, 0.6784909)
 */
export function hosmerLemeshow(
  labels: Float64Array,
  probabilities: Float64Array,
  options: HosmerLemeshowOptions = {},
): HosmerLemeshowResult {
  const sample = options.sample ?? "development";
  if (sample !== "development" && sample !== "external") {
    throw problem("BAD_OPTION_VALUE", { name: "sample", value: sample, expected: 'Use "development" or "external".' });
  }
  const table = calibrationTable(labels, probabilities, options);
  const G = table.groups.length;
  const lost = sample === "development" ? 2 : 0;
  const df = G - lost;
  if (df < 1) {
    throw problem("TOO_FEW_CALIBRATION_GROUPS", { groups: G, requested: table.requestedGroups, needed: lost + 1 });
  }
  const cell = (observed: number, expected: number): number => {
    if (expected > 0) return ((observed - expected) * (observed - expected)) / expected;
    return observed > 0 ? Infinity : 0;
  };
  let statistic = 0;
  let small = 0;
  let firstSmall = -1;
  table.groups.forEach((grp, r) => {
    const expectedNegative = grp.weight - grp.expected;
    statistic += cell(grp.observed, grp.expected) + cell(grp.weight - grp.observed, expectedNegative);
    if (grp.expected < SMALL_EXPECTED || expectedNegative < SMALL_EXPECTED) {
      small++;
      if (firstSmall < 0) firstSmall = r + 1;
    }
  });
  const diagnostics: Diagnostic[] = [];
  if (small > 0) {
    diagnostics.push(makeDiagnostic("SMALL_EXPECTED_COUNTS", "warning", { count: small, groups: G, minimum: SMALL_EXPECTED, group: firstSmall }));
  }
  const p = statistic === Infinity ? 0 : chiSquareSurvival(statistic, df);
  return {
    statistic,
    df,
    p,
    groupCount: G,
    requestedGroups: table.requestedGroups,
    sample,
    groups: table.groups,
    rule: table.rule,
    diagnostics,
  };
}
