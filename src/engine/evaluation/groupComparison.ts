/**
 * Group comparison of a binary classifier: per group of rows (any column of the user's), how the
 * labels, the probabilities and the decisions at a threshold compare, and ratios against a
 * reference group.
 *
 * Policy (one line each):
 * - Groups are the distinct values of the group column among the rows given: text compared after
 *   trimming, case kept (as class labels are), numbers by value; sorted as labels are (text
 *   case-insensitively, numbers ascending). At most MAX_GROUPS groups (GROUPS_TOO_MANY above).
 * - Per group: rows, positives, observed rate (positives / rows), mean predicted probability,
 *   calibration-in-the-large as observed rate - mean predicted (0 is ideal; > 0: the model predicts
 *   too low for the group), and at the threshold (a row is flagged when p >= threshold, as in
 *   confusionCounts) sensitivity, specificity and positive rate (flagged / rows).
 * - Borderline rows: nearBoundaryRows' rule, the one the pane's borderline review uses: |p -
 *   threshold| <= band, or (when probability intervals are given) the interval contains the
 *   threshold. Counted per group, with their share of the group's rows.
 * - Ratios: each group's rate over the reference group's (the one named, else the group with the most
 *   rows, ties to the first in order), for observed rate, mean predicted, sensitivity, specificity,
 *   positive rate and borderline share. A rate that is undefined (0/0) or a ratio over 0 is NaN.
 * - Every group's counts and rates come from the engine's own metrics run on that group's rows
 *   (confusionCounts, nearBoundaryRows): one partition of the rows, so the work is linear in rows.
 *
 * References: Fawcett (2006), "An introduction to ROC analysis", Pattern Recognition Letters
 * 27:861-874 (sensitivity, specificity, positive rate); Steyerberg, Clinical Prediction Models, 2nd
 * ed. (2019), ch. 15 (calibration-in-the-large); Hardt, Price & Srebro (2016), "Equality of
 * opportunity in supervised learning", NeurIPS (comparing error rates across groups); the ratio of
 * positive rates is the "four-fifths" selection-rate comparison of the US Uniform Guidelines on
 * Employee Selection Procedures (29 CFR 1607.4(D)), shown here as a number, not judged.
 */
import { nearBoundaryRows } from "../boundary";
import { compareText } from "../data/labels";
import type { TableColumn } from "../data/table";
import { formatMessage, listNames, problem } from "../messages";
import { confusionCounts } from "../metrics/confusionCounts";
import type { Diagnostic } from "../types";

/** Most groups one comparison shows (a column with more values is an identifier or a measurement). */
export const MAX_GROUPS = 100;

/** Groups smaller than this get a note: their rates vary much by chance (common practice). */
export const SMALL_GROUP_ROWS = 30;

/** Per-group figures. Undefined rates are NaN. */
export interface GroupFigures {
  group: string;
  rows: number;
  positives: number;
  observedRate: number;
  meanPredicted: number;
  /** observedRate - meanPredicted. */
  calibrationInTheLarge: number;
  sensitivity: number;
  specificity: number;
  /** Rows flagged (p >= threshold) over rows. */
  positiveRate: number;
  borderline: number;
  /** borderline / rows. */
  borderlineShare: number;
}

/** Each rate of a group over the reference group's. */
export interface GroupRatios {
  observedRate: number;
  meanPredicted: number;
  sensitivity: number;
  specificity: number;
  positiveRate: number;
  borderlineShare: number;
}

/** Result of {@link compareGroups}. */
export interface GroupComparison {
  threshold: number;
  band: number;
  /** True when the borderline counts include the interval test. */
  intervals: boolean;
  /** Every row together, then one entry per group (in group order). */
  all: GroupFigures;
  groups: GroupFigures[];
  /** Index into `groups` of the reference group. */
  reference: number;
  /** One entry per group, parallel to `groups`. */
  ratios: GroupRatios[];
  diagnostics: Diagnostic[];
}

/** Options of {@link compareGroups}. */
export interface GroupComparisonOptions {
  /** Decision threshold in (0, 1) [0.5]. */
  threshold?: number;
  /** Half-width of the borderline band, 0 to 1 [0.1, as the pane's review]. */
  band?: number;
  /** Lower and upper ends of each row's probability interval (the interval test) [none]. */
  lower?: Float64Array | null;
  upper?: Float64Array | null;
  /** Name of the reference group [the group with the most rows]. */
  reference?: string | null;
}

/** Group codes of rows: index into `names` per row. */
export interface GroupCodes {
  codes: Int32Array;
  names: string[];
}

/**
 * The groups of `rows` of a parsed column (the shared range parser's TableColumn): one code per
 * row in `rows`, names sorted under the policy above.
 * @throws OddsmithError GROUPS_TOO_MANY above MAX_GROUPS distinct values
 * @example groupsOf(readTable([["North"], ["South"], ["North"]], { argument: "group", headers: "no" }).columns[0], [0, 1, 2])
 *   // { codes: [0, 1, 0], names: ["North", "South"] }
 */
export function groupsOf(column: TableColumn, rows: ArrayLike<number>): GroupCodes {
  const seen = new Map<string, number>();
  const first: string[] = [];
  /** Per group: the number it sorts by (number and boolean columns). */
  const sortValue: number[] = [];
  const raw = new Int32Array(rows.length);
  for (let r = 0; r < rows.length; r++) {
    const v = column.values[rows[r]];
    const key = column.kind === "text" ? (v as string).trim() : column.kind === "boolean" ? (v === 1 ? "TRUE" : "FALSE") : String(v);
    let code = seen.get(key);
    if (code === undefined) {
      if (first.length === MAX_GROUPS) {
        throw problem("GROUPS_TOO_MANY", { limit: MAX_GROUPS, rows: rows.length, examples: listNames(first.slice(0, 5)) });
      }
      code = first.length;
      seen.set(key, code);
      first.push(key);
      sortValue.push(column.kind === "text" ? 0 : (v as number));
    }
    raw[r] = code;
  }
  const order = first.map((_, k) => k);
  order.sort(column.kind === "text" ? (a, b) => compareText(first[a], first[b]) : (a, b) => sortValue[a] - sortValue[b]);
  const rank = new Int32Array(first.length);
  order.forEach((k, position) => (rank[k] = position));
  return { codes: raw.map((c) => rank[c]), names: order.map((k) => first[k]) };
}

/** Figures of the rows `idx` (one group, or all rows). */
function figuresOf(group: string, idx: number[], y: Float64Array, p: Float64Array, options: Required<Pick<GroupComparisonOptions, "threshold" | "band">> & GroupComparisonOptions): GroupFigures {
  const yg = Float64Array.from(idx, (i) => y[i]);
  const pg = Float64Array.from(idx, (i) => p[i]);
  const counts = confusionCounts(yg, pg, { threshold: options.threshold });
  const hasIntervals = !!(options.lower && options.upper);
  const review = nearBoundaryRows(
    {
      probabilities: [pg.map((v) => 1 - v), pg],
      predicted: new Int32Array(idx.length),
      margin: new Float64Array(idx.length),
      lower: hasIntervals ? Float64Array.from(idx, (i) => (options.lower as Float64Array)[i]) : undefined,
      upper: hasIntervals ? Float64Array.from(idx, (i) => (options.upper as Float64Array)[i]) : undefined,
    },
    { threshold: options.threshold, band: options.band, undecided: hasIntervals, limit: 0 },
  );
  let positives = 0;
  let sumP = 0;
  for (let r = 0; r < idx.length; r++) {
    positives += yg[r];
    sumP += pg[r];
  }
  const rows = idx.length;
  const observedRate = positives / rows;
  const meanPredicted = sumP / rows;
  return {
    group,
    rows,
    positives,
    observedRate,
    meanPredicted,
    calibrationInTheLarge: observedRate - meanPredicted,
    sensitivity: counts.sensitivity,
    specificity: counts.specificity,
    positiveRate: (counts.truePositives + counts.falsePositives) / rows,
    borderline: review.total,
    borderlineShare: review.total / rows,
  };
}

/** a / b, NaN when either is undefined or b is 0. */
function ratio(a: number, b: number): number {
  return Number.isFinite(a) && Number.isFinite(b) && b !== 0 ? a / b : NaN;
}

function ratiosOf(g: GroupFigures, ref: GroupFigures): GroupRatios {
  return {
    observedRate: ratio(g.observedRate, ref.observedRate),
    meanPredicted: ratio(g.meanPredicted, ref.meanPredicted),
    sensitivity: ratio(g.sensitivity, ref.sensitivity),
    specificity: ratio(g.specificity, ref.specificity),
    positiveRate: ratio(g.positiveRate, ref.positiveRate),
    borderlineShare: ratio(g.borderlineShare, ref.borderlineShare),
  };
}

/** The reference group's index: the one named, else the largest (ties: first in order). */
function referenceIndex(groups: GroupFigures[], wanted: string | null | undefined): number {
  if (wanted !== null && wanted !== undefined) {
    const k = groups.findIndex((g) => g.group === wanted.trim());
    const loose = k >= 0 ? k : groups.findIndex((g) => g.group.toLowerCase() === wanted.trim().toLowerCase());
    if (loose < 0) throw problem("GROUP_NOT_FOUND", { group: wanted, groups: listNames(groups.map((g) => g.group), 12) });
    return loose;
  }
  let best = 0;
  for (let k = 1; k < groups.length; k++) if (groups[k].rows > groups[best].rows) best = k;
  return best;
}

/** Notes: rates undefined in some groups, and small groups. */
function groupNotes(groups: GroupFigures[]): Diagnostic[] {
  const notes: Diagnostic[] = [];
  const note = (code: "GROUP_RATE_UNDEFINED" | "SMALL_GROUPS", params: Record<string, unknown>) =>
    notes.push({ code, severity: "note", message: formatMessage(code, params) });
  const noPositives = groups.filter((g) => g.positives === 0).map((g) => g.group);
  const noNegatives = groups.filter((g) => g.positives === g.rows).map((g) => g.group);
  if (noPositives.length > 0) note("GROUP_RATE_UNDEFINED", { measure: "sensitivity", count: noPositives.length, groups: listNames(noPositives), kind: "positive" });
  if (noNegatives.length > 0) note("GROUP_RATE_UNDEFINED", { measure: "specificity", count: noNegatives.length, groups: listNames(noNegatives), kind: "negative" });
  const small = groups.filter((g) => g.rows < SMALL_GROUP_ROWS).map((g) => g.group);
  if (small.length > 0) note("SMALL_GROUPS", { count: small.length, groups: listNames(small), minimum: SMALL_GROUP_ROWS });
  return notes;
}

/**
 * Compare a binary classifier across groups of rows (figures and rules in the file header).
 *
 * Method: per-group confusion rates at a threshold (Fawcett 2006), calibration-in-the-large as the
 * difference of observed and mean predicted rates (Steyerberg 2019, ch. 15), borderline rows by the
 * grey-zone rule of nearBoundaryRows, and rate ratios against a reference group (Hardt et al. 2016;
 * 29 CFR 1607.4(D) for the positive-rate ratio).
 *
 * @param labels 1 for the positive class, 0 otherwise, per row
 * @param probabilities positive-class probability per row, in [0, 1]
 * @param groups group code per row (groupsOf)
 * @throws OddsmithError the checks of confusionCounts and nearBoundaryRows (BAD_PROBABILITY,
 *   BAD_OPTION_VALUE for threshold or band), GROUP_NOT_FOUND for an unknown reference
 * @example
 * // y 1 0 1 0 | 1 0, p .9 .2 .4 .6 | .7 .3, groups A A A A | B B, threshold 0.5:
 * // A: observed 0.5, mean predicted 0.525, sensitivity 0.5, specificity 0.5, positive rate 0.5;
 * // B: sensitivity 1, specificity 1, positive rate 0.5; reference A (largest): sensitivity ratio 2.
 */
export function compareGroups(labels: Float64Array, probabilities: Float64Array, groups: GroupCodes, options: GroupComparisonOptions = {}): GroupComparison {
  const o = { ...options, threshold: options.threshold ?? 0.5, band: options.band ?? 0.1 };
  const n = labels.length;
  const members: number[][] = groups.names.map(() => []);
  for (let i = 0; i < n; i++) members[groups.codes[i]].push(i);
  const all = figuresOf("all rows", Array.from({ length: n }, (_, i) => i), labels, probabilities, o);
  // Names without rows (none from groupsOf) are left out rather than shown as 0/0.
  const figures = groups.names.map((name, k) => (members[k].length > 0 ? figuresOf(name, members[k], labels, probabilities, o) : null)).filter((g): g is GroupFigures => g !== null);
  const reference = referenceIndex(figures, options.reference);
  return {
    threshold: o.threshold,
    band: o.band,
    intervals: !!(options.lower && options.upper),
    all,
    groups: figures,
    reference,
    ratios: figures.map((g) => ratiosOf(g, figures[reference])),
    diagnostics: groupNotes(figures),
  };
}
