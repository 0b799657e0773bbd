/**
 * The safety cautions the pane always shows. Kept in one place so the pane, the docs and the tests
 * use the same words.
 */
export const CAUTIONS_TITLE = "Before you act on these results";

export const CAUTIONS: readonly string[] = [
  "A model finds statistical associations in this data, not causes: a coefficient does not tell what would happen if you changed that column.",
  "Validate the model on held-out data (rows it was not fitted on) before relying on its probabilities.",
  "Check for unfair effects on groups: compare errors and borderline rows across groups, and ask whether a column stands in for a protected characteristic.",
  "Decisions about people must follow local law and professional standards, with a qualified person accountable for each decision; the model is one input, never the decision.",
];

/** Cautions the evaluation section always shows, next to its charts and threshold chooser. */
export const EVALUATION_CAUTIONS: readonly string[] = [
  "Checks on the rows the model was fitted on flatter it: judge it on out-of-fold or held-out rows.",
  "A threshold trades one kind of error for another; the cost ratio is a judgement about harms that a qualified person makes and answers for.",
  "Compare sensitivity, specificity and calibration across groups before using the threshold on people; a good overall AUC can hide a group the model serves badly.",
];
