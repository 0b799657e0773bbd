/**
 * The row bookkeeping of scoreRows: the offset each scored row needs, and spreading a prediction of
 * the scorable rows back to every row of the scored range.
 *
 * Policy (one line each):
 * - A model fitted with an offset needs one finite offset per scored row; a row without one keeps
 *   its place with a MISSING_FOR_SCORING problem naming the offset.
 * - Rows that cannot be scored hold NaN numbers and predicted class -1.
 */
import type { RowProblem } from "../data/design";
import { padTable, readTable } from "../data/table";
import { requireNumericColumn } from "../data/validate";
import { formatMessage } from "../messages";
import type { CellValue, Prediction } from "../types";

/**
 * The offset per scored row of a model fitted with an offset: the training offsets when scoring the
 * training rows, else the `offset` range read with the scored range's header decision. Rows without
 * a finite offset are marked unscorable (`ok`) with a problem added to `problems` (kept sorted).
 */
export function scoringOffsets(
  training: Float64Array | null,
  cells: CellValue[][] | null | undefined,
  scoringTraining: boolean,
  rows: { n: number; header: boolean; firstRow: number; ok: Uint8Array; problems: RowProblem[] },
): Float64Array | null {
  let offsetAll: Float64Array | null = null;
  if (scoringTraining) offsetAll = training;
  else if (cells != null) {
    const t = padTable(readTable(cells, { argument: "offset", headers: rows.header ? "yes" : "no" }), rows.n);
    offsetAll = requireNumericColumn(t).values;
  }
  // A model fitted with an offset needs one per scored row.
  for (let i = 0; i < rows.n; i++) {
    if (rows.ok[i] && !(offsetAll && Number.isFinite(offsetAll[i]))) {
      rows.ok[i] = 0;
      rows.problems.push({
        index: i,
        code: "MISSING_FOR_SCORING",
        column: "offset",
        message: formatMessage("MISSING_FOR_SCORING", { row: rows.firstRow + i, column: "offset" }),
      });
    }
  }
  rows.problems.sort((a, b) => a.index - b.index);
  return offsetAll;
}

/** Spread a prediction of the good rows back to all rows (NaN / -1 elsewhere). */
export function expand(p: Prediction, good: number[], n: number): Prediction {
  const spread = (a: Float64Array | undefined) => {
    if (!a) return undefined;
    const out = new Float64Array(n).fill(NaN);
    for (let r = 0; r < good.length; r++) out[good[r]] = a[r];
    return out;
  };
  const predicted = new Int32Array(n).fill(-1);
  for (let r = 0; r < good.length; r++) predicted[good[r]] = p.predicted[r];
  const out: Prediction = {
    probabilities: p.probabilities.map((a) => spread(a) as Float64Array),
    predicted,
    margin: spread(p.margin) as Float64Array,
  };
  if (p.linearPredictor) out.linearPredictor = spread(p.linearPredictor);
  if (p.linearPredictorSE) out.linearPredictorSE = spread(p.linearPredictorSE);
  if (p.lower) out.lower = spread(p.lower);
  if (p.upper) out.upper = spread(p.upper);
  if (p.linkMargin) out.linkMargin = spread(p.linkMargin);
  return out;
}
