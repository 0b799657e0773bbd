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
