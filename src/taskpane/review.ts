/**
 * Borderline review: the engine's nearBoundaryRows result turned into the lines the pane lists
 * (sheet row number, key values, probability, margin, flags) and a one-paragraph summary with the
 * counts. Pure: the pane renders it; tests compare it with the engine.
 */
import { nearBoundaryRows, type BoundaryReview, type RowScores, type CellValue } from "../engine";
import { type DataTable, sheetRow } from "./dataTable";

export interface ReviewSettings {
  threshold: number;
  band: number;
  /** Also list rows whose probability interval contains the threshold (two classes). */
  undecided: boolean;
  /** Most rows listed. */
  limit: number;
}

export const DEFAULT_REVIEW: ReviewSettings = { threshold: 0.5, band: 0.1, undecided: true, limit: 200 };

export interface ReviewLine {
  /** 0-based data row. */
  dataRow: number;
  /** 1-based sheet row, what the person sees. */
  sheetRow: number;
  /** Values of the key columns, in order. */
  keys: CellValue[];
  probability: number;
  margin: number;
  predicted: string;
  runnerUp: string;
  withinBand: boolean;
  undecided: boolean;
}

export interface ReviewResult {
  review: BoundaryReview;
  lines: ReviewLine[];
  /** Names of the key columns, for the list's header. */
  keyNames: string[];
  /** Header of the probability column: "P(yes)" (two classes) or "P(top class)". */
  probabilityLabel: string;
  summary: string;
}

function fmt(x: number, digits = 2): string {
  return x.toFixed(digits);
}

function plural(n: number, one: string, many: string): string {
  return `${n.toLocaleString("en-US")} ${n === 1 ? one : many}`;
}

/**
 * Build the borderline review of scored rows.
 * @param keyColumns - 0-based table columns whose values identify a row in the list
 * @param level - confidence level of the probability intervals, for the summary's wording
 */
export function buildReview(
  data: DataTable,
  scores: RowScores,
  settings: ReviewSettings,
  keyColumns: number[],
  level: number,
): ReviewResult {
  const review = nearBoundaryRows(scores.prediction, {
    threshold: settings.threshold,
    band: settings.band,
    undecided: settings.undecided,
    limit: settings.limit,
  });
  const classes = scores.classes;
  const headerOffset = data.table.firstRow - 1;
  const lines: ReviewLine[] = review.rows.map((r) => {
    const cells = data.block.values[headerOffset + r.row] ?? [];
    return {
      dataRow: r.row,
      sheetRow: sheetRow(data, r.row),
      keys: keyColumns.map((k) => cells[k] ?? null),
      probability: r.probability,
      margin: r.margin,
      predicted: classes[r.predicted] ?? "",
      runnerUp: classes[r.runnerUp] ?? "",
      withinBand: r.withinBand,
      undecided: r.undecided,
    };
  });
  const pct = `${Math.round(level * 1000) / 10}%`;
  const parts: string[] = [];
  if (review.kind === "binary") {
    parts.push(
      `${plural(review.withinBand, "row lies", "rows lie")} within ${fmt(settings.band)} of the threshold ${fmt(settings.threshold)}.`,
    );
    if (settings.undecided) {
      if (!review.intervalsAvailable) parts.push("No probability intervals are available for this fit, so no row is marked undecided.");
      else parts.push(`${plural(review.undecidedOnly, "more row has", "more rows have")} a ${pct} interval that contains the threshold.`);
    }
  } else {
    const has = review.withinBand === 1 ? "row has its" : "rows have their";
    parts.push(`${review.withinBand.toLocaleString("en-US")} ${has} two most likely classes within ${fmt(settings.band)} of each other.`);
  }
  parts.push(`${plural(review.scored, "row", "rows")} scored${review.unscored ? `, ${plural(review.unscored, "row", "rows")} could not be scored` : ""}.`);
  if (review.truncated) parts.push(`The closest ${review.rows.length.toLocaleString("en-US")} are listed.`);
  return {
    review,
    lines,
    keyNames: keyColumns.map((k) => data.columns[k].name),
    probabilityLabel: review.kind === "binary" ? `P(${scores.positiveClass ?? classes[1]})` : "P(top class)",
    summary: parts.join(" "),
  };
}

/** 1-based sheet rows of every qualifying row (not only the listed ones), for highlighting. */
export function borderlineSheetRows(data: DataTable, scores: RowScores, settings: ReviewSettings): number[] {
  const all = nearBoundaryRows(scores.prediction, {
    threshold: settings.threshold,
    band: settings.band,
    undecided: settings.undecided,
    limit: scores.rows,
  });
  return all.rows.map((r) => sheetRow(data, r.row)).sort((a, b) => a - b);
}
