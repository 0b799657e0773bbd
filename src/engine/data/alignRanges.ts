/**
 * Reading several ranges that describe the same rows (labels, predictors, weights, ...) with one
 * header decision: the one header-agreement rule of the program, used by the fits and by the metric
 * cell functions alike.
 *
 * Policy (each rule is repeated in one line above the code that applies it):
 * - headers = "yes" / "no" decide for every range.
 * - Under "auto", the range with the strongest header evidence (forced > strong > weak > none)
 *   decides for all; the second range wins a tie (the predictors of a fit, the probabilities of a
 *   metric), so a labels column of words and a block of numbers cannot end up shifted by one row.
 * - A range whose own evidence pointed the other way is named in a HEADERS_DISAGREE note; a problem
 *   met while reading ranges whose first rows disagreed carries the same facts (HEADER_RULE_HINT,
 *   appended to its message: a header row read as data, or data read as a header, is often the cause).
 * - Row counts must agree (validate.ts, checkAlignedRows); a range that ends earlier than the others
 *   is blank below its end.
 */
import { formatMessage, OddsmithError } from "../messages";
import type { CellValue, Diagnostic } from "../types";
import { detectHeader, normalizeRange, padTable, readTable, type HeaderEvidence, type Table } from "./table";
import { checkAlignedRows } from "./validate";

/** One range of an aligned read: its argument name (in messages) and its cells. */
export interface RangeArg {
  argument: string;
  cells: CellValue[][];
}

/** The shared header decision of several ranges. */
export interface HeaderAgreement {
  header: boolean;
  /** The note naming a range whose own evidence pointed the other way, or null. */
  note: Diagnostic | null;
  /** That note's facts (HEADERS_DISAGREE and HEADER_RULE_HINT parameters), or null. */
  disagreement: Record<string, string> | null;
  /** How sure the overruled range was of its own reading ("none" without a disagreement). */
  overruledEvidence: HeaderEvidence;
}

const EVIDENCE_RANK: Record<HeaderEvidence, number> = { forced: 3, strong: 2, weak: 1, none: 0 };

/**
 * The one header decision of ranges that describe the same rows (see the policy above). Under
 * "auto" each range's evidence comes from readTable's header rule (detectHeader).
 */
export function agreeHeaders(ranges: RangeArg[], headers: "auto" | "yes" | "no"): HeaderAgreement {
  if (headers !== "auto") return { header: headers === "yes", note: null, disagreement: null, overruledEvidence: "none" };
  const detected = ranges.map((r) => detectHeader(normalizeRange(r.cells, r.argument).rows));
  // Under auto, the range with the strongest evidence decides for all (the second range wins a tie).
  let best = 1 < ranges.length ? 1 : 0;
  detected.forEach((d, k) => {
    if (EVIDENCE_RANK[d.evidence] > EVIDENCE_RANK[detected[best].evidence]) best = k;
  });
  const header = detected[best].header;
  // A range whose own evidence pointed the other way is named in a note, so the choice is visible.
  const other = detected.findIndex((d) => d.header !== header && d.evidence !== "none");
  if (other < 0) return { header, note: null, disagreement: null, overruledEvidence: "none" };
  const looks = (h: boolean) => (h ? "column names" : "data");
  const params = {
    decided: ranges[best].argument,
    decidedLooks: looks(header),
    other: ranges[other].argument,
    otherLooks: looks(!header),
    decision: looks(header),
  };
  return { header, note: { code: "HEADERS_DISAGREE", severity: "note", message: formatMessage("HEADERS_DISAGREE", params) }, disagreement: params, overruledEvidence: detected[other].evidence };
}

/**
 * Problems a first row read the wrong way can cause: a name read as a value (text in a numeric
 * column, an extra class or category, a bad probability, weight or count) or a value read as a name
 * (ranges one row apart, a class or column not found). Shape problems of their own (two weight
 * columns) get no hint.
 */
const HEADER_SENSITIVE = new Set([
  "NOT_A_NUMBER",
  "RANGE_SHAPE_MISMATCH",
  "TOO_MANY_CLASSES",
  "TOO_MANY_LABELS",
  "ONE_CLASS_ONLY",
  "CLASS_NOT_FOUND",
  "COLUMN_NOT_FOUND",
  "LEVEL_NOT_FOUND",
  "BAD_WEIGHT",
  "BAD_TRIALS",
  "BAD_PROBABILITY",
  "PROBABILITY_COLUMN_COUNT",
  "PROBABILITY_COLUMN_MISSING",
  "METRIC_MISSING_VALUE",
]);

/**
 * Run `body` (reading ranges under one header decision); a problem it throws while the ranges' first
 * rows disagreed gets the HEADER_RULE_HINT appended to its message (same code and parameters).
 */
export function withHeaderHint<T>(agreement: HeaderAgreement, body: () => T): T {
  try {
    return body();
  } catch (error) {
    if (agreement.disagreement && error instanceof OddsmithError && HEADER_SENSITIVE.has(error.code) && !error.message.includes("(Header rows:")) {
      error.message += formatMessage("HEADER_RULE_HINT", agreement.disagreement);
    }
    throw error;
  }
}

/** Aligned tables of a fit, with what the read found out. */
export interface AlignedTables {
  /** One table per range, padded to the longest (`rows` data rows each). */
  tables: Table[];
  /** Data rows of each range itself, before padding. */
  ownRows: number[];
  rows: number;
  notes: Diagnostic[];
  /** The header decision (for withHeaderHint around later reading steps). */
  agreement: HeaderAgreement;
}

/**
 * Read a fit's ranges with one header decision and one row count. The first range is the reference
 * for shape messages ("labels"); the second holds the predictors (columns named x1, x2, ... without a
 * header); a single-column range without a header is named after its argument ("labels", "weights").
 * @throws OddsmithError RANGE_SHAPE_MISMATCH, and readTable's range problems
 */
export function readAlignedRanges(ranges: RangeArg[], headers: "auto" | "yes" | "no"): AlignedTables {
  const agreement = agreeHeaders(ranges, headers);
  return withHeaderHint(agreement, () => readAgreed(ranges, agreement));
}

function readAgreed(ranges: RangeArg[], agreement: HeaderAgreement): AlignedTables {
  const forced = agreement.header ? "yes" : "no";
  const tables = ranges.map((r, k) => {
    const t = readTable(r.cells, { argument: r.argument, headers: forced, namePrefix: k === 1 ? "x" : r.argument });
    // A single-column range without a header is named after its argument ("labels", "weights").
    if (!t.header && k !== 1) t.columns[0].name = t.names[0] = r.argument;
    return t;
  });
  // Error cells were read as blank: each range that held some is named in a warning.
  const notes = agreement.note ? [agreement.note] : [];
  for (const t of tables) if (t.errorCells.count > 0) notes.push(errorCellsNote(t));
  // Ranges are aligned by selected rows: compare the row counts before trimming.
  checkAlignedRows(tables);
  const rows = Math.max(...tables.map((t) => t.rows));
  // A range that ends earlier than the others is blank below its end.
  return {
    tables: tables.map((t) => padTable(t, rows)),
    ownRows: tables.map((t) => t.rows),
    rows,
    notes,
    agreement,
  };
}

/** The ERROR_VALUES_AS_BLANK warning of a range whose error cells were read as blank. */
function errorCellsNote(t: Table): Diagnostic {
  const first = t.errorCells.first as { row: number; column: number; value: string };
  const params = { count: t.errorCells.count, argument: t.argument, value: first.value, row: first.row, column: first.column };
  return { code: "ERROR_VALUES_AS_BLANK", severity: "warning", message: formatMessage("ERROR_VALUES_AS_BLANK", params), params };
}
