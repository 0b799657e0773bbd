/**
 * Option schemas of the metric cell functions, composed from the shared option specs of options.ts
 * (the one parser). Only the options a metric really uses are accepted: anything else is reported as
 * an unknown option rather than silently ignored.
 */
import { FIT_OPTIONS, OPT_HEADERS, OPT_LEVEL, OPT_POSITIVE, OPT_THRESHOLD, type BooleanSpec, type ChoiceSpec, type NumberSpec, type TextSpec } from "../shared/options";

/** Number of calibration groups (the Hosmer-Lemeshow "deciles of risk" by default). */
export const OPT_GROUPS = {
  name: "groups",
  type: "number",
  min: 2,
  max: 1000,
  integer: true,
  default: 10,
  help: "Number of groups of predicted probability (quantile groups; ties stay together).",
} as const satisfies NumberSpec;

/** Whether the probabilities come from a model fitted to the same rows (changes the H-L df). */
export const OPT_SAMPLE = {
  name: "sample",
  type: "choice",
  choices: ["development", "external"],
  default: "development",
  help: "development: the probabilities come from a model fitted to these rows (df = groups - 2); external: from a model fitted elsewhere (df = groups).",
} as const satisfies ChoiceSpec;

export const LOGLOSS_OPTIONS = [OPT_POSITIVE, OPT_HEADERS] as const;
export const AUC_OPTIONS = [OPT_POSITIVE, OPT_LEVEL, OPT_HEADERS] as const;
export const CONFUSION_OPTIONS = [OPT_POSITIVE, OPT_THRESHOLD, OPT_HEADERS] as const;
export const CALIBRATION_OPTIONS = [OPT_POSITIVE, OPT_GROUPS, OPT_SAMPLE, OPT_HEADERS] as const;

/** ODDS.CUTOFF rules: one of cost, sensitivity, budget (cost = 1 when none is given). */
export const OPT_COST = {
  name: "cost",
  type: "number",
  min: 0,
  minExclusive: true,
  default: null,
  help: "Cost of a false positive divided by the cost of a false negative; the threshold with the least expected cost is chosen (default 1).",
} as const satisfies NumberSpec;
export const OPT_SENSITIVITY = {
  name: "sensitivity",
  type: "number",
  min: 0,
  max: 1,
  default: null,
  help: "Target sensitivity: the highest threshold whose sensitivity reaches it.",
} as const satisfies NumberSpec;
export const OPT_BUDGET = {
  name: "budget",
  type: "number",
  min: 0,
  max: 1048576,
  integer: true,
  default: null,
  help: "Review budget: the lowest threshold that flags at most this many rows (tied rows stay together).",
} as const satisfies NumberSpec;
export const CUTOFF_OPTIONS = [OPT_POSITIVE, OPT_COST, OPT_SENSITIVITY, OPT_BUDGET, OPT_HEADERS] as const;

/** ODDS.EFFECTS: how 0/1 columns and the indicator columns of text predictors are treated. */
export const OPT_INDICATORS = {
  name: "indicators",
  type: "choice",
  choices: ["change", "slope"],
  default: "change",
  help: "change: 0/1 columns and text levels show the change in probability from 0 to 1 (from the reference level); slope: the derivative, as for any number column.",
} as const satisfies ChoiceSpec;

/**
 * ODDS.EFFECTS takes the fit options (so it shares ODDS.FIT's cached fit, and one options cell can
 * serve both; the threshold is accepted as FIT accepts it and changes nothing), plus `indicators`.
 */
export const EFFECTS_OPTIONS = [...FIT_OPTIONS, OPT_INDICATORS] as const;

/** ODDS.GROUPS: half-width of the borderline band, as the pane's review (DEFAULT_REVIEW.band). */
export const OPT_BAND = {
  name: "band",
  type: "number",
  min: 0,
  max: 1,
  default: 0.1,
  help: "Half-width of the borderline band: a row is borderline when its probability is within this of the threshold.",
} as const satisfies NumberSpec;

/** ODDS.GROUPS: the group the others are compared with. */
export const OPT_VERSUS = {
  name: "versus",
  type: "text",
  default: null,
  help: "The group the ratios compare every group with (default: the group with the most rows).",
} as const satisfies TextSpec;

/** ODDS.GROUPS: the second range holds predictors, and the model is fitted. */
export const OPT_FIT_MODE = {
  name: "fit",
  type: "boolean",
  default: false,
  help: "TRUE: the second range holds the predictor columns; the model is fitted as ODDS.FIT fits it (its options apply) and borderline rows also include rows whose probability interval holds the threshold.",
} as const satisfies BooleanSpec;

/** The options ODDS.GROUPS takes without fit=true. */
export const GROUPS_PROBABILITY_MODE_OPTIONS = [OPT_POSITIVE, OPT_THRESHOLD, OPT_HEADERS, OPT_BAND, OPT_VERSUS, OPT_FIT_MODE] as const;

/** Every option of ODDS.GROUPS: FIT's (used with fit=true only, else refused) and its own. */
export const GROUPS_OPTIONS = [...FIT_OPTIONS, OPT_BAND, OPT_VERSUS, OPT_FIT_MODE] as const;
