/**
 * The one options parser of the cell functions. Every ODDS function that takes an options argument
 * declares a schema (name, type, bounds or choices, default, help) and calls `parseOptions`.
 *
 * Accepted forms of the options argument:
 * - omitted (null/undefined) or blank: every option takes its default;
 * - text: "penalty=0.1; level=0.9" — pairs name=value separated by ";", "," or a line break, names in any case,
 *   spaces anywhere around names, "=" and values; an empty piece (e.g. a trailing ";") is ignored;
 *   a boolean option named alone ("firth") means true;
 * - a range of two columns: option names in the first column, values in the second (blank rows
 *   ignored); a one-column range of "name=value" texts is read like text, one cell at a time.
 * Values: number options take numbers or numeric text (locale-free, as in the range parser) within
 * their bounds; boolean options take TRUE/FALSE, yes/no, 1/0 (any case); choice options take one of
 * their choices (any case); text options take any non-blank text. An option given twice is an error,
 * except for options marked `repeat`, which collect every value in order.
 * Problems: OPTION_SYNTAX, UNKNOWN_OPTION (lists the valid names), BAD_OPTION_VALUE (says what is
 * valid), DUPLICATE_OPTION.
 */
import { errorLiteral, parseNumericText } from "../engine";
import { problem } from "./messages";

interface SpecBase {
  /** Lower-case name the user writes. */
  name: string;
  /** One line for tooltips and docs. */
  help: string;
}
export interface NumberSpec extends SpecBase {
  type: "number";
  min?: number;
  max?: number;
  /** Bounds are inclusive unless marked exclusive. */
  minExclusive?: boolean;
  maxExclusive?: boolean;
  integer?: boolean;
  default: number | null;
}
export interface BooleanSpec extends SpecBase {
  type: "boolean";
  default: boolean | null;
}
export interface ChoiceSpec extends SpecBase {
  type: "choice";
  choices: readonly string[];
  default: string | null;
}
export interface TextSpec extends SpecBase {
  type: "text";
  default: string | null;
  /** Collect every occurrence into a list instead of rejecting a repeat. */
  repeat?: boolean;
}
export type OptionSpec = NumberSpec | BooleanSpec | ChoiceSpec | TextSpec;

type ValueOf<S extends OptionSpec> = S extends NumberSpec
  ? number
  : S extends BooleanSpec
    ? boolean
    : S extends ChoiceSpec
      ? S["choices"][number]
      : S extends { repeat: true }
        ? string[]
        : string;

type DefaultOf<S extends OptionSpec> = S extends { repeat: true } ? never : S["default"] extends null ? null : never;

/** Parsed options: one entry per schema name, typed from the schema. */
export type ParsedOptions<S extends readonly OptionSpec[]> = {
  [K in S[number] as K["name"]]: ValueOf<K> | DefaultOf<K>;
};

const TRUE_WORDS = new Set(["true", "yes", "1"]);
const FALSE_WORDS = new Set(["false", "no", "0"]);

/** "a, b or c" for messages. */
function orList(items: readonly string[]): string {
  if (items.length <= 1) return items.join("");
  return `${items.slice(0, -1).join(", ")} or ${items[items.length - 1]}`;
}

function fmtNumber(x: number): string {
  return String(x);
}

/** Plain-language description of what a spec accepts (used in BAD_OPTION_VALUE and in help). */
export function expectedText(spec: OptionSpec): string {
  switch (spec.type) {
    case "boolean":
      return "Use TRUE or FALSE (yes/no and 1/0 also work).";
    case "choice":
      return `Choose one of: ${orList(spec.choices)}.`;
    case "text":
      return "Enter some text.";
    case "number": {
      const kind = spec.integer ? "a whole number" : "a number";
      const lo = spec.min !== undefined ? `${spec.minExclusive ? "above" : "at least"} ${fmtNumber(spec.min)}` : "";
      const hi = spec.max !== undefined ? `${spec.maxExclusive ? "below" : "at most"} ${fmtNumber(spec.max)}` : "";
      const range = [lo, hi].filter((s) => s !== "").join(" and ");
      return range ? `Enter ${kind} that is ${range}.` : `Enter ${kind}.`;
    }
  }
}

/** One line per option: "name: help (default ...)", for tooltips and docs. */
export function describeOptions(schema: readonly OptionSpec[]): string[] {
  return schema.map((s) => {
    const def = s.default === null ? "" : ` [default ${String(s.default)}]`;
    return `${s.name}: ${s.help} ${expectedText(s)}${def}`;
  });
}

type Pair = { name: string; value: unknown; source: string };

function isBlank(v: unknown): boolean {
  return v === null || v === undefined || (typeof v === "string" && v.trim() === "");
}

function pairsFromText(text: string, booleanNames: Set<string>): Pair[] {
  const pairs: Pair[] = [];
  // Separators: ";", "," and line breaks (a cell of several lines).
  const pieces = text.split(/[;,\r\n]/);
  for (let k = 0, start = 0; k < pieces.length; start += pieces[k].length + 1, k++) {
    const p = pieces[k].trim();
    // An empty piece (a trailing or doubled separator) is ignored.
    if (p === "") continue;
    const eq = p.indexOf("=");
    if (eq < 0) {
      // A boolean option named alone means true.
      const bare = p.toLowerCase();
      if (booleanNames.has(bare)) {
        pairs.push({ name: bare, value: true, source: p });
        continue;
      }
      // Digits right after "name=number," are a decimal comma ("penalty=0,5"): say so.
      const before = k > 0 ? pieces[k - 1].trim() : "";
      if (/^\d+$/.test(p) && /=\s*[+-]?\d+$/.test(before) && text.charAt(start - 1) === ",") {
        throw problem("OPTION_DECIMAL_COMMA", { text: text.trim(), at: p, suggestion: `${before.replace(/\s+/g, "")}.${p}` });
      }
      throw problem("OPTION_SYNTAX", { text: text.trim(), at: p });
    }
    const name = p.slice(0, eq).trim();
    if (name === "") throw problem("OPTION_SYNTAX", { text: text.trim(), at: p });
    pairs.push({ name, value: p.slice(eq + 1).trim(), source: p });
  }
  return pairs;
}

function collectPairs(raw: unknown, booleanNames: Set<string>): Pair[] {
  // Omitted or blank: every option takes its default.
  if (isBlank(raw)) return [];
  if (typeof raw === "string") return pairsFromText(raw, booleanNames);
  if (!Array.isArray(raw)) {
    throw problem("OPTION_SYNTAX", { text: String(raw), at: String(raw) });
  }
  const rows = raw.length > 0 && !Array.isArray(raw[0]) ? [raw as unknown[]] : (raw as unknown[][]);
  const width = rows.length > 0 ? rows[0].length : 0;
  rows.forEach((row, i) =>
    row.forEach((v, j) => {
      // An error value is never an option; a third column would be silently dropped: both refused.
      const literal = errorLiteral(v);
      if (literal !== null) throw problem("ERROR_VALUE_CELL", { argument: "options", value: literal, row: i + 1, column: j + 1, what: "options are text or numbers" });
      if (j >= 2 && !isBlank(v)) throw problem("OPTIONS_RANGE_SHAPE", { columns: width, column: j + 1, row: i + 1, value: String(v) });
    }),
  );
  const pairs: Pair[] = [];
  if (width === 1) {
    // A one-column range: each non-blank cell is options text.
    for (const row of rows) {
      const v = row[0];
      if (isBlank(v)) continue;
      if (typeof v !== "string") throw problem("OPTION_SYNTAX", { text: String(v), at: String(v) });
      pairs.push(...pairsFromText(v, booleanNames));
    }
    return pairs;
  }
  // A two-column range: names in the first column, values in the second; blank rows ignored.
  for (const row of rows) {
    const [name, value] = [row[0], row[1]];
    if (isBlank(name) && isBlank(value)) continue;
    if (isBlank(name) || typeof name !== "string") {
      throw problem("OPTION_SYNTAX", { text: `${String(name ?? "")} | ${String(value ?? "")}`, at: String(name ?? "") });
    }
    pairs.push({ name: name.trim(), value, source: `${name}` });
  }
  return pairs;
}

function convert(spec: OptionSpec, value: unknown): unknown {
  const shown = typeof value === "boolean" ? (value ? "TRUE" : "FALSE") : String(value ?? "").trim();
  const bad = () => problem("BAD_OPTION_VALUE", { name: spec.name, value: shown, expected: expectedText(spec) });
  if (isBlank(value)) throw bad();
  switch (spec.type) {
    case "number": {
      const x = typeof value === "number" ? value : typeof value === "string" ? parseNumericText(value) : NaN;
      if (!Number.isFinite(x)) throw bad();
      if (spec.integer && !Number.isInteger(x)) throw bad();
      if (spec.min !== undefined && (spec.minExclusive ? x <= spec.min : x < spec.min)) throw bad();
      if (spec.max !== undefined && (spec.maxExclusive ? x >= spec.max : x > spec.max)) throw bad();
      return x;
    }
    case "boolean": {
      if (typeof value === "boolean") return value;
      const w = String(value).trim().toLowerCase();
      if (TRUE_WORDS.has(w)) return true;
      if (FALSE_WORDS.has(w)) return false;
      throw bad();
    }
    case "choice": {
      const w = shown.toLowerCase();
      const hit = spec.choices.find((c) => c.toLowerCase() === w);
      if (hit === undefined) throw bad();
      return hit;
    }
    case "text":
      return shown;
  }
}

/**
 * Parse the options argument of cell function `fn` against `schema`.
 *
 * @param fn the function's name as the user sees it (e.g. "ODDS.FIT"), used in messages.
 * @throws OddsmithError OPTION_SYNTAX, UNKNOWN_OPTION, BAD_OPTION_VALUE, DUPLICATE_OPTION.
 * @example
 * parseOptions("ODDS.FIT", [PENALTY, LEVEL], "Penalty = 0.1; level=0.9") // { penalty: 0.1, level: 0.9 }
 */
export function parseOptions<const S extends readonly OptionSpec[]>(fn: string, schema: S, raw: unknown): ParsedOptions<S> {
  const byName = new Map<string, OptionSpec>();
  for (const s of schema) byName.set(s.name.toLowerCase(), s);
  const booleanNames = new Set(schema.filter((s) => s.type === "boolean").map((s) => s.name.toLowerCase()));
  const out: Record<string, unknown> = {};
  for (const s of schema) out[s.name] = s.type === "text" && s.repeat ? [] : s.default;
  const seen = new Map<string, string>();
  for (const pair of collectPairs(raw, booleanNames)) {
    const spec = byName.get(pair.name.toLowerCase());
    // Unknown names list the valid ones.
    if (!spec) {
      throw problem("UNKNOWN_OPTION", { name: pair.name, fn, valid: schema.map((s) => s.name).join(", ") });
    }
    const value = convert(spec, pair.value);
    if (spec.type === "text" && spec.repeat) {
      (out[spec.name] as string[]).push(value as string);
      continue;
    }
    const shown = typeof pair.value === "boolean" ? (pair.value ? "TRUE" : "FALSE") : String(pair.value).trim();
    const prior = seen.get(spec.name);
    // An option given twice is ambiguous: say so rather than let one silently win.
    if (prior !== undefined) throw problem("DUPLICATE_OPTION", { name: spec.name, first: prior, second: shown });
    seen.set(spec.name, shown);
    out[spec.name] = value;
  }
  return out as ParsedOptions<S>;
}

// ---- shared option specs: functions compose their schemas from these -----------------------------

export const OPT_PENALTY = {
  name: "penalty",
  type: "number",
  min: 0,
  default: 0,
  help: "Ridge (L2) penalty strength; 0 fits by plain maximum likelihood. The intercept is never penalized.",
} as const satisfies NumberSpec;

export const OPT_SCALE = {
  name: "scale",
  type: "choice",
  choices: ["standardized", "original"],
  default: "standardized",
  help: "Scale on which the penalty applies: standardized predictors or the original ones.",
} as const satisfies ChoiceSpec;

export const OPT_FIRTH = {
  name: "firth",
  type: "boolean",
  default: false,
  help: "Firth bias-reduced fit: finite estimates even when the classes are separated.",
} as const satisfies BooleanSpec;

export const OPT_POSITIVE = {
  name: "positive",
  type: "text",
  default: null,
  help: "The class modelled as 'positive' in a two-class problem (default: 1, TRUE, yes, or the second in sorted order).",
} as const satisfies TextSpec;

export const OPT_REFERENCE = {
  name: "reference",
  type: "text",
  default: null,
  help: "Reference class of a multi-class model (default: the first in sorted order).",
} as const satisfies TextSpec;

export const OPT_LEVEL = {
  name: "level",
  type: "number",
  min: 0,
  max: 1,
  minExclusive: true,
  maxExclusive: true,
  default: 0.95,
  help: "Confidence level of intervals.",
} as const satisfies NumberSpec;

export const OPT_INTERVAL = {
  name: "interval",
  type: "choice",
  choices: ["wald", "profile"],
  default: "wald",
  help: "Interval method: wald (estimate +- z * SE) or profile (profile likelihood).",
} as const satisfies ChoiceSpec;

export const OPT_THRESHOLD = {
  name: "threshold",
  type: "number",
  min: 0,
  max: 1,
  minExclusive: true,
  maxExclusive: true,
  default: 0.5,
  help: "Probability above which a row is assigned the positive class.",
} as const satisfies NumberSpec;

export const OPT_INTERCEPT = {
  name: "intercept",
  type: "boolean",
  default: true,
  help: "Fit an intercept.",
} as const satisfies BooleanSpec;

export const OPT_HEADERS = {
  name: "headers",
  type: "choice",
  choices: ["auto", "yes", "no"],
  default: "auto",
  help: "Whether the first row of each range holds column names (auto: detect).",
} as const satisfies ChoiceSpec;

export const OPT_BASELINE = {
  name: "baseline",
  type: "text",
  default: null,
  repeat: true,
  help: "Reference category of a text predictor, written column:category (repeat for several columns).",
} as const satisfies TextSpec;

export const OPT_POOL = {
  name: "pool",
  type: "number",
  min: 0,
  integer: true,
  default: 0,
  help: "Pool categories seen in fewer rows than this into (other); 0 never pools.",
} as const satisfies NumberSpec;

export const OPT_FORM = {
  name: "form",
  type: "choice",
  choices: ["reference", "symmetric"],
  default: "reference",
  help: "Multi-class form: equations against a reference class, or one per class (needs a penalty).",
} as const satisfies ChoiceSpec;

/** The options every fitting function accepts. */
export const FIT_OPTIONS = [
  OPT_PENALTY,
  OPT_SCALE,
  OPT_FIRTH,
  OPT_POSITIVE,
  OPT_REFERENCE,
  OPT_LEVEL,
  OPT_INTERVAL,
  OPT_THRESHOLD,
  OPT_INTERCEPT,
  OPT_HEADERS,
  OPT_BASELINE,
  OPT_POOL,
  OPT_FORM,
] as const;

/**
 * Turn baseline entries ("region:North") into a column -> category map.
 * @throws OddsmithError BAD_OPTION_VALUE when an entry lacks the ":".
 */
export function parseBaselines(entries: readonly string[]): Record<string, string> {
  const out: Record<string, string> = {};
  for (const e of entries) {
    const k = e.indexOf(":");
    const column = k > 0 ? e.slice(0, k).trim() : "";
    const level = k > 0 ? e.slice(k + 1).trim() : "";
    if (column === "" || level === "") {
      throw problem("BAD_OPTION_VALUE", {
        name: "baseline",
        value: e,
        expected: "Write column:category, e.g. baseline=region:North.",
      });
    }
    out[column] = level;
  }
  return out;
}
