/**
 * Option schemas of the evaluation cell functions ODDS.FOLDS and ODDS.HOLDOUT, composed from the
 * shared option specs of options.ts (the one parser), and the reading of the penalty grid.
 *
 * Policy (one line each):
 * - The model options are those of ODDS.FIT without the interval options (these functions use only
 *   probabilities): penalty, scale, firth, positive, reference, threshold, intercept, headers,
 *   baseline, pool, form.
 * - penalties: "a to b" gives `steps` log-spaced penalties (default 10); a list "0 0.1 1 10"
 *   (spaces between: "," and ";" separate options) gives those penalties. With penalties, the
 *   penalty option is refused (one of them says which penalties are fitted).
 * - recipe: one recipe item per occurrence ("recipe=age: ns(4); recipe=region: levels"); an item
 *   holding "," or ";" needs the two-column options range (name | value), where a value may hold a
 *   whole recipe.
 */
import { givenPenalties, logSpacedPenalties, parseNumericText } from "../engine";
import { problem } from "../shared/messages";
import {
  OPT_BASELINE,
  OPT_FIRTH,
  OPT_FORM,
  OPT_HEADERS,
  OPT_INTERCEPT,
  OPT_PENALTY,
  OPT_POOL,
  OPT_POSITIVE,
  OPT_REFERENCE,
  OPT_SCALE,
  OPT_THRESHOLD,
  type ChoiceSpec,
  type NumberSpec,
  type TextSpec,
} from "../shared/options";

/** The model options of the evaluation functions (ODDS.FIT's, without the interval options). */
const MODEL_OPTIONS = [OPT_PENALTY, OPT_SCALE, OPT_FIRTH, OPT_POSITIVE, OPT_REFERENCE, OPT_THRESHOLD, OPT_INTERCEPT, OPT_HEADERS, OPT_BASELINE, OPT_POOL, OPT_FORM] as const;

export const OPT_FOLDS = {
  name: "folds",
  type: "number",
  min: 2,
  max: 20,
  integer: true,
  default: 5,
  help: "Number of folds; each class needs at least this many rows.",
} as const satisfies NumberSpec;

export const OPT_SEED = {
  name: "seed",
  type: "number",
  integer: true,
  min: -2147483648,
  max: 4294967295,
  default: 1,
  help: "Seed of the random assignment to folds (or to the held-out split): the same seed and rows give the same assignment.",
} as const satisfies NumberSpec;

export const OPT_PENALTIES = {
  name: "penalties",
  type: "text",
  default: null,
  help: 'Penalties to compare: "0.01 to 100" (log-spaced, see steps) or a list with spaces, "0 0.1 1 10".',
} as const satisfies TextSpec;

export const OPT_STEPS = {
  name: "steps",
  type: "number",
  min: 2,
  max: 50,
  integer: true,
  default: null,
  help: 'How many log-spaced penalties "a to b" gives (default 10).',
} as const satisfies NumberSpec;

export const OPT_SHOW = {
  name: "show",
  type: "choice",
  choices: ["scores", "path", "out-of-fold", "folds"],
  default: null,
  help: "What to spill: scores (mean and SE over folds), path (one row per penalty), out-of-fold (probabilities aligned with the rows) or folds (each row's fold). Default: path with penalties, otherwise scores.",
} as const satisfies ChoiceSpec;

export const OPT_PICK = {
  name: "pick",
  type: "choice",
  choices: ["one-se", "lowest"],
  default: "one-se",
  help: "Which penalty of a path the scores and out-of-fold probabilities use: the one-standard-error choice or the lowest mean log-loss.",
} as const satisfies ChoiceSpec;

export const OPT_RECIPE = {
  name: "recipe",
  type: "text",
  default: null,
  repeat: true,
  help: "A basis recipe item built inside each fit from its training rows only, e.g. recipe=age: ns(4) (repeat for more items).",
} as const satisfies TextSpec;

export const OPT_HOLDOUT = {
  name: "holdout",
  type: "number",
  min: 0,
  max: 1,
  minExclusive: true,
  maxExclusive: true,
  default: null,
  help: "Share of the rows held out by a seeded split stratified by class, e.g. holdout=0.3 (used when no split column is given; default 0.3).",
} as const satisfies NumberSpec;

export const OPT_HOLDOUT_SHOW = {
  name: "show",
  type: "choice",
  choices: ["scores", "held-out", "probabilities", "split"],
  default: "scores",
  help: "What to spill: scores (training and held-out side by side), held-out (the held-out rows' probabilities, aligned with the rows), probabilities (every row's, from the training fit) or split (each row's role).",
} as const satisfies ChoiceSpec;

export const FOLDS_OPTIONS = [...MODEL_OPTIONS, OPT_FOLDS, OPT_SEED, OPT_PENALTIES, OPT_STEPS, OPT_SHOW, OPT_PICK, OPT_RECIPE] as const;
export const HOLDOUT_OPTIONS = [...MODEL_OPTIONS, OPT_HOLDOUT, OPT_SEED, OPT_HOLDOUT_SHOW, OPT_RECIPE] as const;

/** Default number of log-spaced penalties. */
export const DEFAULT_STEPS = 10;

/**
 * The penalties of the penalties option (see the policy above), or null when it is not given.
 * @throws OddsmithError BAD_OPTION_VALUE for text that is neither form, or a bad grid
 * @example readPenalties("0.01 to 100", 5) // [0.01, 0.1, 1, 10, 100]; readPenalties("1 0 10", null) // [0, 1, 10]
 */
export function readPenalties(text: string | null, steps: number | null): number[] | null {
  if (text === null) {
    if (steps !== null) throw problem("BAD_OPTION_VALUE", { name: "steps", value: steps, expected: 'steps goes with a range of penalties, e.g. "penalties=0.01 to 100; steps=12".' });
    return null;
  }
  const expected = 'Write two ends, "penalties=0.01 to 100", or a list with spaces, "penalties=0 0.1 1 10".';
  const range = /^(\S+)\s+to\s+(\S+)$/i.exec(text.trim());
  if (range) {
    const from = parseNumericText(range[1]);
    const to = parseNumericText(range[2]);
    if (!Number.isFinite(from) || !Number.isFinite(to)) throw problem("BAD_OPTION_VALUE", { name: "penalties", value: text, expected });
    return logSpacedPenalties(from, to, steps ?? DEFAULT_STEPS);
  }
  if (steps !== null) throw problem("BAD_OPTION_VALUE", { name: "steps", value: steps, expected: "steps goes with a range of penalties (a to b), not with a list." });
  const values = text.trim().split(/\s+/).map(parseNumericText);
  if (values.some((v) => !Number.isFinite(v))) throw problem("BAD_OPTION_VALUE", { name: "penalties", value: text, expected });
  return givenPenalties(values);
}
