/**
 * The rows of the evaluation cell functions' score tables (ODDS.FOLDS, ODDS.HOLDOUT): which engine
 * score each row shows and its label. Two classes show the AUC and the accuracy at the threshold;
 * several classes show no AUC and the accuracy of the most probable class.
 */
import type { HeldOutScores } from "../engine";

/** One score row: the engine score's key and its label. */
export interface ScoreLabel {
  key: keyof Omit<HeldOutScores, "rows">;
  label: string;
}

/** The score rows of a fit of `kind`, with accuracy at `threshold` for two classes. */
export function scoreLabels(kind: "binary" | "multiclass", threshold: number): ScoreLabel[] {
  const rows: ScoreLabel[] = [
    { key: "logLoss", label: "log-loss" },
    { key: "brier", label: "Brier score" },
  ];
  if (kind === "binary") rows.push({ key: "auc", label: "AUC" });
  rows.push({ key: "accuracy", label: kind === "binary" ? `accuracy (threshold ${threshold})` : "accuracy (most probable class)" });
  return rows;
}
