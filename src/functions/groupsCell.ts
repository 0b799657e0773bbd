/**
 * ODDS.GROUPS(labels, probabilities_or_predictors, group, [options]): the classifier's figures per
 * group of rows (engine compareGroups) and their ratios against a reference group.
 *
 * Policy (one line each):
 * - The second range holds positive-class probabilities (one column, as ODDS.PROB writes them: any
 *   probabilities, held-out or cross-validated ones too). With fit=true it holds the predictor columns
 *   instead: the two-class model is fitted as ODDS.FIT fits it (FIT's options, the same cached fit),
 *   and borderline rows then also include rows whose probability interval holds the threshold: the
 *   pane's borderline review, rule for rule. Without fit=true, FIT's own options are refused.
 * - The group range is one column of the user's, as tall as the labels (header rows included), whether
 *   or not it is also a predictor. Rows with a blank group are skipped and counted; an error value in
 *   it is refused, naming the cell.
 * - Output: a header row; "all rows"; one row per group (sorted); ratios against `versus` (default
 *   the largest group); then the settings, the rows used and skipped, what the figures cannot show
 *   (GROUPS_NOT_CAUSAL) and the notes. At most MAX_GROUPS groups, so at most about 110 x 17 cells.
 */
import {
  compareGroups,
  groupsOf,
  readTable,
  scoreRows,
  type CellValue,
  type GroupComparison,
  type GroupFigures,
  type GroupRatios,
  type Table,
} from "../engine";
import { formatMessage, problem } from "../shared/messages";
import { spill } from "../shared/cellOutput";
import { readMetricInputs } from "./metricInputs";
import { GROUPS_OPTIONS, GROUPS_PROBABILITY_MODE_OPTIONS } from "./metricOptions";
import { modelOptionsOf } from "../shared/fitService";
import { fittedModel, requireUsableFit } from "./modelCell";
import { FIT_OPTIONS, parseOptions, type ParsedOptions } from "../shared/options";
import { checkPayload } from "../shared/payload";
import { required } from "./required";

type GroupsOptions = ParsedOptions<typeof GROUPS_OPTIONS>;

/** What the comparison needs, from either mode. */
interface GroupInputs {
  y: Float64Array;
  p: Float64Array;
  lower: Float64Array | null;
  upper: Float64Array | null;
  /** 0-based data row of each used row (into the group table). */
  dataRows: number[];
  positive: string;
  header: boolean;
  /** Rows skipped before the group column is read (blank label or probability, skipped by the fit). */
  skipped: number;
  /** Data rows of the labels range. */
  height: number;
}

/** Without fit=true, options that only a fit uses are refused rather than ignored. */
function refuseFitOnlyOptions(o: GroupsOptions): void {
  const kept = new Set<string>(GROUPS_PROBABILITY_MODE_OPTIONS.map((s) => s.name));
  for (const spec of FIT_OPTIONS) {
    if (kept.has(spec.name)) continue;
    const value = (o as Record<string, unknown>)[spec.name];
    const unchanged = Array.isArray(value) ? value.length === 0 : value === spec.default;
    if (!unchanged) {
      throw problem("BAD_OPTION_VALUE", {
        name: spec.name,
        value: Array.isArray(value) ? value.join(", ") : String(value),
        expected: "This option changes a fit, and ODDS.GROUPS fits nothing unless fit=true (the second range then holds the predictors). Remove it, or add fit=true.",
      });
    }
  }
}

/** Probability mode: labels and one probability column, read as the metric functions read them. */
function fromProbabilities(labels: CellValue[][], probabilities: CellValue[][], o: GroupsOptions): GroupInputs {
  refuseFitOnlyOptions(o);
  const inputs = readMetricInputs(labels, probabilities, { fn: "ODDS.GROUPS", positive: o.positive, headers: o.headers, binaryOnly: true });
  const first = inputs.header ? 2 : 1;
  return {
    y: inputs.y,
    p: inputs.p,
    lower: null,
    upper: null,
    dataRows: Array.from(inputs.sheetRows, (r) => r - first),
    positive: inputs.positiveClass as string,
    header: inputs.header,
    skipped: inputs.rowsSkipped,
    height: inputs.dataRows,
  };
}

/** Fit mode: the model of labels x predictors, scored on its own rows with probability intervals. */
function fromFit(labels: CellValue[][], predictors: CellValue[][], group: CellValue[][], o: GroupsOptions): GroupInputs {
  const model = fittedModel(labels, predictors, { model: modelOptionsOf(o) }, 2000, [{ argument: "group", cells: group }]);
  if (model.kind !== "binary") {
    throw problem("BINARY_METRIC_ONLY", { fn: "ODDS.GROUPS", count: model.fit.classes.length, classes: model.fit.classes.join(", ") });
  }
  requireUsableFit(model);
  const s = scoreRows(model, null, { threshold: o.threshold });
  const positive = model.fit.classes.indexOf(model.fit.positiveClass as string);
  const codes = model.labels.codes as Int32Array;
  const used: number[] = [];
  for (let i = 0; i < model.rows; i++) if (model.rowMap[i] >= 0 && s.scored[i] && codes[i] >= 0) used.push(i);
  const pick = (a: Float64Array | undefined) => (a ? Float64Array.from(used, (i) => a[i]) : null);
  return {
    y: Float64Array.from(used, (i) => (codes[i] === positive ? 1 : 0)),
    p: pick(s.prediction.probabilities[positive]) as Float64Array,
    lower: pick(s.prediction.lower),
    upper: pick(s.prediction.upper),
    dataRows: used,
    positive: model.fit.positiveClass as string,
    header: model.header,
    skipped: model.rows - used.length,
    height: model.rows,
  };
}

/** The group column, as tall as the labels, under the labels' header decision. */
function readGroupColumn(group: CellValue[][], inputs: GroupInputs): Table {
  const table = readTable(group, { argument: "group", headers: inputs.header ? "yes" : "no", errors: "refuse", errorReason: "a group comparison over fewer rows than selected would be misread" });
  if (table.columns.length !== 1) throw problem("SINGLE_COLUMN_NEEDED", { argument: "group", columns: table.columns.length });
  const height = table.rows + table.trimmedRows;
  if (height !== inputs.height) {
    throw problem("RANGE_SHAPE_MISMATCH", { argument: "group", got: height, expectedArgument: "labels", expected: inputs.height });
  }
  return table;
}

const FIGURE_HEADERS = (positive: string) => [
  "rows",
  `positives (${positive})`,
  "observed rate",
  `mean P(${positive})`,
  "calibration-in-the-large (observed - predicted)",
  "sensitivity",
  "specificity",
  "positive rate (flagged / rows)",
  "borderline rows",
  "borderline share",
];
const RATIO_KEYS: (keyof GroupRatios)[] = ["positiveRate", "sensitivity", "specificity", "observedRate", "meanPredicted", "borderlineShare"];
const RATIO_NAMES = ["positive rate", "sensitivity", "specificity", "observed rate", "mean predicted", "borderline share"];

function figureCells(g: GroupFigures): unknown[] {
  return [g.rows, g.positives, g.observedRate, g.meanPredicted, g.calibrationInTheLarge, g.sensitivity, g.specificity, g.positiveRate, g.borderline, g.borderlineShare];
}

/** The spilled table of a comparison. */
function layout(c: GroupComparison, column: string | null, inputs: GroupInputs, blankGroups: number): unknown[][] {
  const ref = c.groups[c.reference].group;
  const rows: unknown[][] = [
    [column === null ? "group" : `group (${column})`, ...FIGURE_HEADERS(inputs.positive), ...RATIO_NAMES.map((n) => `${n} ratio (vs ${ref})`)],
    [c.all.group, ...figureCells(c.all)],
    ...c.groups.map((g, k) => [g.group, ...figureCells(g), ...RATIO_KEYS.map((key) => c.ratios[k][key])]),
    [],
    [
      `threshold ${c.threshold} (flagged when P(${inputs.positive}) >= threshold); borderline: |P(${inputs.positive}) - threshold| <= ${c.band}` +
        (c.intervals ? " or the probability interval holds the threshold" : ""),
    ],
    ["rows used", c.all.rows],
    ["rows skipped (blank label or probability, or not fitted)", inputs.skipped],
    ["rows skipped (blank group)", blankGroups],
    [formatMessage("GROUPS_NOT_CAUSAL")],
  ];
  for (const d of c.diagnostics) rows.push([d.message]);
  return rows;
}

/**
 * The ODDS.GROUPS adapter.
 * @returns header row, "all rows", one row per group with ratios, then settings, counts and notes
 */
export function groupsCell(
  labels: CellValue[][] | null,
  second: CellValue[][] | null,
  group: CellValue[][] | null,
  options: CellValue[][] | null,
): CellValue[][] {
  const l = required(labels, "labels");
  const s = required(second, "probabilities_or_predictors");
  const g = required(group, "group");
  const o = parseOptions("ODDS.GROUPS", GROUPS_OPTIONS, options);
  checkPayload([{ argument: "labels", cells: l }, { argument: "probabilities_or_predictors", cells: s }, { argument: "group", cells: g }], 2000);
  const inputs = o.fit ? fromFit(l, s, g, o) : fromProbabilities(l, s, o);
  const table = readGroupColumn(g, inputs);
  const column = table.columns[0];
  // Rows with a blank group are skipped (counted); the rest keep their order.
  const keep: number[] = [];
  for (let r = 0; r < inputs.dataRows.length; r++) {
    const i = inputs.dataRows[r];
    if (i < table.rows && !column.missing[i]) keep.push(r);
  }
  if (keep.length === 0) throw problem("NO_USABLE_ROWS", { missing: `group ${inputs.dataRows.length}` });
  const at = (a: Float64Array | null) => (a ? Float64Array.from(keep, (r) => a[r]) : null);
  const codes = groupsOf(column, keep.map((r) => inputs.dataRows[r]));
  const comparison = compareGroups(at(inputs.y) as Float64Array, at(inputs.p) as Float64Array, codes, {
    threshold: o.threshold,
    band: o.band,
    lower: at(inputs.lower),
    upper: at(inputs.upper),
    reference: o.versus,
  });
  return spill(layout(comparison, table.header ? column.name : null, inputs, inputs.dataRows.length - keep.length));
}
