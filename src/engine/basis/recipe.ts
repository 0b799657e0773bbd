/**
 * The basis recipe language: a short text that says which basis columns to build from which data
 * columns. Parse -> plan (no data needed); fit plan on training columns -> stored state (plain JSON);
 * apply state to any rows -> basis columns with names, NaN and row notes for per-row problems.
 *
 * Grammar (docs/basis-recipes.md has the same with examples):
 *
 *   recipe   = item { sep item }                 sep = ";" or a line break; empty items are ignored
 *   item     = targets ":" steps                 transform the named columns
 *            | column "*" column { "*" column }  the product of numeric columns ("age*income")
 *   targets  = column { "," column } | "*"       "*" = every data column no other item names
 *                                                 (columns with no value at all are skipped)
 *   steps    = call { "+" call }                 several transforms of the same targets
 *   call     = transform [ "(" [ arg { "," arg } ] ")" ]
 *   arg      = value | setting "=" value         a bare value sets the transform's main setting
 *   value    = number | number "%" | word | quoted | "[" value { "," value } "]"
 *   column   = header text (spaces allowed) | quoted      quote "..." or '...' when the header
 *                                                          contains , * : ; ( ) [ ] = or quotes
 *
 * Transforms (names ignore case; main setting first):
 *   raw                      the column as is                 "age"
 *   auto                     raw for numbers, levels for text
 *   poly(degree)             powers x .. x^d; on several columns every monomial up to total degree d
 *   opoly(degree)            orthogonal polynomials (as R's poly), one column at a time
 *   pairs                    all pairwise products of the targets (two or more columns)
 *   log, log1p, sqrt, inv    pointwise; setting shift=number|auto
 *   z                        z-score (training mean, sample SD)
 *   minmax                   (x - min) / (max - min) with the training range
 *   levels(ref, pool)        indicator columns; ref = reference level; pool = 5 (rows) or 2% (share)
 *   ns(df, knots, boundary)  natural cubic spline (as R's splines::ns)
 *   rbf(k, centres, seed, width)   Gaussian radial basis; centres=quantile|kmeans
 *   bins(k)                  quantile bins as indicator columns (first bin = reference)
 *
 * Single-column transforms on several targets apply to each target separately; poly, pairs and rbf
 * on several targets work on them jointly.
 * Reference for the notation's spirit: Wilkinson & Rogers (1973), "Symbolic description of factorial
 * models for analysis of variance", Appl. Stat. 22:392-399 (the product operator); the syntax here is
 * our own.
 */
import { listNames, problem } from "../messages";
import { fitBins, MAX_BINS } from "./bins";
import { type BasisBlock, type BasisColumn, type FitNote, rowNote } from "./common";
import { applyBasisState, sourcesOf, type BasisState } from "./index";
import { fitLevels, type LevelsOptions } from "./levels";
import { fitMinmax } from "./minmax";
import { fitNs, MAX_NS_DF } from "./ns";
import { fitPointwise, type PointwiseFunction } from "./pointwise";
import { fitPoly, MAX_POLY_DEGREE } from "./poly";
import { fitProducts, MAX_TOTAL_DEGREE } from "./products";
import { fitRaw } from "./raw";
import { fitRbf, MAX_RBF_CENTRES } from "./rbf";
import { fitZscore } from "./zscore";

// ---- plan types ---------------------------------------------------------------------------------

/** A transform with its settings, as parsed and checked (no data yet). */
export type StepSpec =
  | { transform: "raw" }
  | { transform: "auto" }
  | { transform: "poly"; degree: number }
  | { transform: "opoly"; degree: number }
  | { transform: "pairs" }
  | { transform: "product" }
  | { transform: PointwiseFunction; shift: number | "auto" }
  | { transform: "z" }
  | { transform: "minmax" }
  | { transform: "levels"; ref?: string; minCount?: number; minShare?: number }
  | { transform: "ns"; df?: number; knots?: number[]; boundary?: [number, number] }
  | { transform: "rbf"; k: number; centres?: "quantile" | "kmeans"; seed?: number; width?: number }
  | { transform: "bins"; k: number };

/** One step of a plan: a transform applied to target columns. */
export interface RecipeStep {
  /** Column names, or "*" for every column no other item names. */
  targets: string[] | "*";
  spec: StepSpec;
  /** The item's text, for messages ("age: ns(4)"). */
  text: string;
}

/** A parsed recipe. */
export interface RecipePlan {
  text: string;
  steps: RecipeStep[];
}

/** A fitted recipe: everything needed to transform new rows exactly as the training rows. */
export interface RecipeState {
  /** Format version of this object. */
  version: 1;
  recipe: string;
  /** One state per fitted transform, in output order. */
  states: BasisState[];
  /** All generated column names, in order. */
  names: string[];
  /** Fit-time findings (e.g. fewer bins than asked because of ties). */
  fitNotes: FitNote[];
  /** Number of training rows seen. */
  trainingRows: number;
}

// ---- the valid forms, shown in every syntax error -----------------------------------------------

/** Transform names accepted by the parser. */
export const TRANSFORM_NAMES = [
  "raw", "auto", "poly", "opoly", "pairs", "log", "log1p", "sqrt", "inv", "z", "minmax", "levels", "ns", "rbf", "bins",
] as const;

/** The hint appended to syntax errors: the valid forms in one line. */
export const RECIPE_FORMS =
  'Write items separated by ";" such as "age: ns(4)", "income: log(shift=auto)", "region: levels(ref=North)", "x, y: rbf(5)", "age: poly(2) + z" or "age*income".';

// ---- scanner ------------------------------------------------------------------------------------

/** Characters that end a bare column name or value. */
const NAME_STOP = new Set([",", "*", ":", ";", "\n", "\r", "(", ")", "[", "]", "=", '"', "'", "+"]);
const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

type Value = { kind: "number"; value: number; text: string } | { kind: "percent"; value: number; text: string } | { kind: "word"; text: string } | { kind: "list"; items: Value[]; text: string };

interface Arg {
  key: string | null;
  value: Value;
  at: number;
}

class Scanner {
  pos = 0;
  constructor(readonly text: string) {}

  fail(expected: string, at = this.pos): never {
    const snippet = this.text.slice(at, at + 24);
    const shown = at >= this.text.length ? "(end of recipe)" : snippet.replace(/\r?\n/g, " ");
    throw problem("RECIPE_SYNTAX", {
      text: this.text.length > 80 ? `${this.text.slice(0, 77)}...` : this.text,
      at: shown,
      hint: `At character ${at + 1}: expected ${expected}. ${RECIPE_FORMS}`,
    });
  }

  /** Skip spaces and tabs (not line breaks, which separate items). */
  blanks(): void {
    while (this.pos < this.text.length && (this.text[this.pos] === " " || this.text[this.pos] === "\t")) this.pos++;
  }

  peek(): string {
    this.blanks();
    return this.text[this.pos] ?? "";
  }

  eat(ch: string): boolean {
    if (this.peek() === ch) {
      this.pos++;
      return true;
    }
    return false;
  }

  atEnd(): boolean {
    return this.peek() === "";
  }

  /** A quoted string ("..." or '...'; a doubled quote inside stands for one). */
  quoted(): string {
    const q = this.text[this.pos];
    const start = this.pos;
    this.pos++;
    let out = "";
    for (;;) {
      if (this.pos >= this.text.length) this.fail(`a closing ${q}`, start);
      const c = this.text[this.pos++];
      if (c === q) {
        if (this.text[this.pos] === q) {
          out += q;
          this.pos++;
          continue;
        }
        return out;
      }
      out += c;
    }
  }

  /** Bare text up to a stop character, trimmed (may contain inner spaces). */
  bare(): string {
    const start = this.pos;
    while (this.pos < this.text.length && !NAME_STOP.has(this.text[this.pos])) this.pos++;
    return this.text.slice(start, this.pos).trim();
  }

  /** A column name: quoted or bare. */
  column(what = "a column header"): string {
    const c = this.peek();
    if (c === '"' || c === "'") return this.quoted();
    const at = this.pos;
    const name = this.bare();
    if (name === "") this.fail(what, at);
    return name;
  }

  /** A transform or setting name: letters, digits, "_" and ".". */
  ident(what: string): string {
    this.blanks();
    const m = /^[A-Za-z_][A-Za-z0-9_.]*/.exec(this.text.slice(this.pos));
    if (!m) this.fail(what);
    this.pos += m[0].length;
    return m[0];
  }

  value(): Value {
    const c = this.peek();
    const start = this.pos;
    if (c === "[") {
      this.pos++;
      const items: Value[] = [];
      if (!this.eat("]")) {
        do items.push(this.value());
        while (this.eat(","));
        if (!this.eat("]")) this.fail('"," or "]" to close the list');
      }
      return { kind: "list", items, text: this.text.slice(start, this.pos) };
    }
    if (c === '"' || c === "'") return { kind: "word", text: this.quoted() };
    const text = this.bare();
    if (text === "") this.fail("a value (a number, a word or a [list])", start);
    if (NUMBER.test(text)) return { kind: "number", value: Number(text), text };
    if (text.endsWith("%") && NUMBER.test(text.slice(0, -1).trim())) {
      return { kind: "percent", value: Number(text.slice(0, -1).trim()) / 100, text };
    }
    return { kind: "word", text };
  }
}

// ---- settings of each transform -----------------------------------------------------------------

interface TransformSpecDef {
  /** Setting a bare (unnamed) first argument sets, if any. */
  main?: string;
  settings: string[];
  /** Targets allowed: "one" column per step, "many" jointly (2+), or "any". */
  arity: "one" | "many" | "any";
  build(args: Map<string, Value>, bad: BadSetting): StepSpec;
}

type BadSetting = (name: string, value: Value | string, expected: string) => never;

function intIn(v: Value | undefined, name: string, lo: number, hi: number, bad: BadSetting): number | undefined {
  if (v === undefined) return undefined;
  if (v.kind !== "number" || !Number.isInteger(v.value) || v.value < lo || v.value > hi) {
    bad(name, v, `Use a whole number from ${lo} to ${hi}.`);
  }
  return v.value;
}

function numberList(v: Value | undefined, name: string, bad: BadSetting): number[] | undefined {
  if (v === undefined) return undefined;
  const items = v.kind === "list" ? v.items : [v];
  return items.map((it) => {
    if (it.kind !== "number") bad(name, v, `Use numbers, e.g. ${name}=[20, 40, 60].`);
    return (it as { value: number }).value;
  });
}

const pointwise = (fn: PointwiseFunction): TransformSpecDef => ({
  main: "shift",
  settings: ["shift"],
  arity: "one",
  build(a, bad) {
    const v = a.get("shift");
    if (v === undefined) return { transform: fn, shift: 0 };
    if (v.kind === "word" && v.text.toLowerCase() === "auto") return { transform: fn, shift: "auto" };
    if (v.kind !== "number") bad("shift", v, "Use a number (added before the function) or auto (chosen from the training values).");
    return { transform: fn, shift: (v as { value: number }).value };
  },
});

const TRANSFORMS: Record<(typeof TRANSFORM_NAMES)[number], TransformSpecDef> = {
  raw: { settings: [], arity: "one", build: () => ({ transform: "raw" }) },
  auto: { settings: [], arity: "one", build: () => ({ transform: "auto" }) },
  poly: {
    main: "degree",
    settings: ["degree"],
    arity: "any",
    build: (a, bad) => ({ transform: "poly", degree: intIn(a.get("degree"), "degree", 1, MAX_POLY_DEGREE, bad) ?? 2 }),
  },
  opoly: {
    main: "degree",
    settings: ["degree"],
    arity: "one",
    build: (a, bad) => ({ transform: "opoly", degree: intIn(a.get("degree"), "degree", 1, MAX_POLY_DEGREE, bad) ?? 2 }),
  },
  pairs: { settings: [], arity: "many", build: () => ({ transform: "pairs" }) },
  log: pointwise("log"),
  log1p: pointwise("log1p"),
  sqrt: pointwise("sqrt"),
  inv: pointwise("inv"),
  z: { settings: [], arity: "one", build: () => ({ transform: "z" }) },
  minmax: { settings: [], arity: "one", build: () => ({ transform: "minmax" }) },
  levels: {
    main: "ref",
    settings: ["ref", "pool"],
    arity: "one",
    build(a, bad) {
      const spec: StepSpec & { transform: "levels" } = { transform: "levels" };
      const ref = a.get("ref");
      if (ref !== undefined) {
        if (ref.kind === "list") bad("ref", ref, "Give one level, e.g. ref=North.");
        spec.ref = ref.text;
      }
      const pool = a.get("pool");
      if (pool !== undefined) {
        if (pool.kind === "number" && Number.isInteger(pool.value) && pool.value >= 1) spec.minCount = pool.value;
        else if (pool.kind === "percent" && pool.value > 0 && pool.value < 1) spec.minShare = pool.value;
        else bad("pool", pool, 'Use a row count (pool=5: levels in fewer than 5 rows go to "(other)") or a share (pool=2%).');
      }
      return spec;
    },
  },
  ns: {
    main: "df",
    settings: ["df", "knots", "boundary"],
    arity: "one",
    build(a, bad) {
      const knots = numberList(a.get("knots"), "knots", bad);
      const boundary = numberList(a.get("boundary"), "boundary", bad);
      if (boundary && (boundary.length !== 2 || !(boundary[0] < boundary[1]))) {
        bad("boundary", a.get("boundary")!, "Give two increasing numbers, e.g. boundary=[0, 100].");
      }
      const df = intIn(a.get("df"), "df", 1, MAX_NS_DF, bad);
      if (df !== undefined && knots !== undefined) bad("df", a.get("df")!, "Give df or knots, not both.");
      return { transform: "ns", df: knots ? undefined : (df ?? 3), knots, boundary: boundary as [number, number] | undefined };
    },
  },
  rbf: {
    main: "k",
    settings: ["k", "centres", "centers", "seed", "width"],
    arity: "any",
    build(a, bad) {
      const spec: StepSpec & { transform: "rbf" } = { transform: "rbf", k: intIn(a.get("k"), "k", 1, MAX_RBF_CENTRES, bad) ?? 5 };
      const c = a.get("centres") ?? a.get("centers");
      if (c !== undefined) {
        const t = c.text.toLowerCase();
        if (t !== "quantile" && t !== "kmeans") bad("centres", c, "Use centres=quantile (one column) or centres=kmeans.");
        spec.centres = t as "quantile" | "kmeans";
      }
      const seed = a.get("seed");
      if (seed !== undefined) spec.seed = intIn(seed, "seed", 0, 2 ** 32 - 1, bad);
      const w = a.get("width");
      if (w !== undefined) {
        if (w.kind !== "number" || !(w.value > 0)) bad("width", w, "Use a positive number (in training standard deviations).");
        spec.width = (w as { value: number }).value;
      }
      return spec;
    },
  },
  bins: {
    main: "k",
    settings: ["k"],
    arity: "one",
    build: (a, bad) => ({ transform: "bins", k: intIn(a.get("k"), "k", 2, MAX_BINS, bad) ?? 4 }),
  },
};

// ---- parser -------------------------------------------------------------------------------------

function parseCall(s: Scanner, targets: string[] | "*", itemText: () => string): StepSpec {
  const name = s.ident(`a transform name (${TRANSFORM_NAMES.join(", ")})`);
  const def = TRANSFORMS[name.toLowerCase() as (typeof TRANSFORM_NAMES)[number]];
  if (!def) throw problem("RECIPE_UNKNOWN_TRANSFORM", { name, valid: TRANSFORM_NAMES.join(", ") });
  const args: Arg[] = [];
  if (s.eat("(")) {
    if (!s.eat(")")) {
      do {
        s.blanks();
        const argAt = s.pos;
        const m = /^([A-Za-z_][A-Za-z0-9_]*)\s*=/.exec(s.text.slice(s.pos));
        let key: string | null = null;
        if (m) {
          key = m[1].toLowerCase();
          s.pos += m[0].length;
        }
        args.push({ key, value: s.value(), at: argAt });
      } while (s.eat(","));
      if (!s.eat(")")) s.fail(`"," or ")" to close the settings of ${name}`);
    }
  }
  const settings = new Map<string, Value>();
  args.forEach((arg, j) => {
    let key = arg.key;
    if (key === null) {
      if (j > 0 || !def.main) s.fail(def.main ? `a setting written name=value (settings of ${name}: ${def.settings.join(", ")})` : `no settings: ${name} takes none`, arg.at);
      key = def.main!;
    }
    if (!def.settings.includes(key)) {
      throw problem("UNKNOWN_OPTION", { name: key, fn: `the transform ${name}`, valid: def.settings.length ? def.settings.join(", ") : "(none)" });
    }
    if (settings.has(key)) s.fail(`${key} only once`, arg.at);
    settings.set(key, arg.value);
  });
  const bad: BadSetting = (setting, value, expected) => {
    throw problem("RECIPE_BAD_PARAMETER", {
      step: itemText(),
      name: setting,
      value: typeof value === "string" ? value : value.text,
      expected,
    });
  };
  const spec = def.build(settings, bad);
  if (targets !== "*") {
    if (def.arity === "many" && targets.length < 2) {
      throw problem("RECIPE_BAD_PARAMETER", { step: itemText(), name: "columns", value: targets.join(", "), expected: `${name} needs two or more columns, e.g. "a, b, c: ${name}".` });
    }
  }
  return spec;
}

/**
 * Parse a recipe into a plan (no data needed).
 * @throws OddsmithError RECIPE_SYNTAX (with the position and the valid forms), RECIPE_EMPTY,
 *   RECIPE_UNKNOWN_TRANSFORM, UNKNOWN_OPTION, RECIPE_BAD_PARAMETER.
 * @example parseRecipe("age: ns(4); region: levels(ref=North); age*income").steps.length // 3
 */
export function parseRecipe(text: string): RecipePlan {
  const s = new Scanner(String(text ?? ""));
  const steps: RecipeStep[] = [];
  const isSep = (c: string) => c === ";" || c === "\n" || c === "\r";
  for (;;) {
    while (isSep(s.peek())) s.pos++;
    if (s.atEnd()) break;
    const itemStart = s.pos;
    const itemText = () => {
      let end = s.pos;
      while (end < s.text.length && !isSep(s.text[end])) end++;
      return s.text.slice(itemStart, end).trim();
    };
    let targets: string[] | "*";
    if (s.peek() === "*") {
      s.pos++;
      targets = "*";
      if (!s.eat(":")) s.fail('":" after "*" (for example "*: z")');
    } else {
      const first = s.column();
      if (s.peek() === "*") {
        // Product item: a*b*c.
        const cols = [first];
        while (s.eat("*")) cols.push(s.column("a column header after *"));
        if (!(s.atEnd() || isSep(s.peek()))) s.fail('";" or a line break after the product');
        steps.push({ targets: cols, spec: { transform: "product" }, text: itemText() });
        continue;
      }
      targets = [first];
      while (s.eat(",")) targets.push(s.column("a column header after ,"));
      if (!s.eat(":")) {
        // "age ns(4)": the bare name swallowed the transform; point at it and show the fix.
        const last = targets[targets.length - 1];
        const words = last.split(/\s+/);
        const tail = words[words.length - 1];
        if (words.length > 1 && (TRANSFORM_NAMES as readonly string[]).includes(tail.toLowerCase())) {
          const col = words.slice(0, -1).join(" ");
          s.fail(`":" between the column and the transform, as in "${col}: ${tail}"`, s.text.lastIndexOf(tail, s.pos));
        }
        s.fail(`":" after the column name${targets.length > 1 ? "s" : ""}, then a transform (e.g. "${last}: z")`);
      }
    }
    do {
      steps.push({ targets, spec: parseCall(s, targets, itemText), text: itemText() });
    } while (s.eat("+"));
    if (!(s.atEnd() || isSep(s.peek()))) s.fail('"+" and another transform, or ";" before the next item');
  }
  if (steps.length === 0) throw problem("RECIPE_EMPTY", { hint: RECIPE_FORMS });
  return { text: s.text, steps };
}

// ---- fitting and applying -----------------------------------------------------------------------

/** Find a column by header: exact match first, then a unique match ignoring case and spaces. */
export function findColumn(columns: readonly BasisColumn[], name: string, argument = "data"): BasisColumn {
  const exact = columns.find((c) => c.name === name);
  if (exact) return exact;
  const norm = (s: string) => s.trim().toLowerCase();
  const loose = columns.filter((c) => norm(c.name) === norm(name));
  if (loose.length === 1) return loose[0];
  throw problem("RECIPE_UNKNOWN_COLUMN", { column: name, argument, headers: listNames(columns.map((c) => c.name), 12) });
}

function isTextColumn(c: BasisColumn): boolean {
  return c.values.some((v) => typeof v === "string");
}

function fitStep(step: RecipeStep, cols: BasisColumn[]): BasisState[] {
  const spec = step.spec;
  switch (spec.transform) {
    case "product":
      return [fitProducts(cols, { mode: "product" })];
    case "pairs":
      return [fitProducts(cols, { mode: "pairs" })];
    case "poly":
      return cols.length > 1
        ? [fitProducts(cols, { mode: "polynomial", degree: Math.min(spec.degree, MAX_TOTAL_DEGREE) })]
        : [fitPoly(cols[0], { degree: spec.degree, orthogonal: false })];
    case "rbf":
      return [fitRbf(cols, { k: spec.k, centres: spec.centres, seed: spec.seed, width: spec.width })];
    default:
      return cols.map((c): BasisState => {
        switch (spec.transform) {
          case "raw":
            return fitRaw(c);
          case "auto":
            return isTextColumn(c) ? fitLevels(c) : fitRaw(c);
          case "opoly":
            return fitPoly(c, { degree: spec.degree, orthogonal: true });
          case "log":
          case "log1p":
          case "sqrt":
          case "inv":
            return fitPointwise(c, { fn: spec.transform, shift: spec.shift });
          case "z":
            return fitZscore(c);
          case "minmax":
            return fitMinmax(c);
          case "levels": {
            const o: LevelsOptions = { ref: spec.ref, minCount: spec.minCount, minShare: spec.minShare };
            return fitLevels(c, o);
          }
          case "ns":
            return fitNs(c, { df: spec.df, knots: spec.knots, boundary: spec.boundary });
          case "bins":
            return fitBins(c, spec.k);
        }
      });
  }
}

/**
 * Fit a plan on training columns: resolves column names ("*" = every column no other item names),
 * fits each transform and checks that no generated name repeats.
 * @throws OddsmithError RECIPE_UNKNOWN_COLUMN, RECIPE_DUPLICATE_COLUMN, and each transform's errors.
 */
export function fitRecipe(plan: RecipePlan, columns: readonly BasisColumn[], argument = "data"): RecipeState {
  const named = new Set<string>();
  for (const step of plan.steps) {
    if (step.targets !== "*") for (const t of step.targets) named.add(findColumn(columns, t, argument).name);
  }
  const states: BasisState[] = [];
  const madeBy = new Map<string, string>();
  const names: string[] = [];
  for (const step of plan.steps) {
    // "*" skips columns with no value at all (gaps in a selection), which no transform could use.
    const cols =
      step.targets === "*"
        ? columns.filter((c) => !named.has(c.name) && c.values.some((v) => v !== null))
        : step.targets.map((t) => findColumn(columns, t, argument));
    if (cols.length === 0) continue;
    if (step.targets === "*" && (step.spec.transform === "pairs" && cols.length < 2)) continue;
    for (const state of fitStep(step, cols)) {
      for (const name of state.names) {
        if (madeBy.has(name)) {
          throw problem("RECIPE_DUPLICATE_COLUMN", { name, steps: `"${madeBy.get(name)}" and "${step.text}"` });
        }
        madeBy.set(name, step.text);
        names.push(name);
      }
      states.push(state);
    }
  }
  const fitNotes = states.flatMap((s) => ("fitNotes" in s ? s.fitNotes : []));
  return { version: 1, recipe: plan.text, states, names, fitNotes, trainingRows: columns.length ? columns[0].values.length : 0 };
}

/**
 * Apply a fitted recipe to rows (matched to the stored state by column header).
 * Per-row problems give NaN and a RowNote; a missing column is a whole-call error.
 * @throws OddsmithError RECIPE_UNKNOWN_COLUMN when a column the recipe uses is not in `columns`.
 */
export function applyRecipe(state: RecipeState, columns: readonly BasisColumn[], argument = "data"): BasisBlock {
  const out: BasisBlock = { names: [], columns: [], notes: [] };
  const seen = new Set<string>();
  for (const s of state.states) {
    const block = applyBasisState(s, (name) => findColumn(columns, name, argument));
    // Overflow policy: a result too large for a double (x^10 of a large x, a product of large
    // values) is a per-row problem like a domain error, never an Infinity passed on.
    const sources = sourcesOf(s);
    block.columns.forEach((col, k) => {
      for (let i = 0; i < col.length; i++) {
        if (col[i] === Infinity || col[i] === -Infinity) {
          col[i] = NaN;
          const first = findColumn(columns, sources[0], argument);
          block.notes.push(
            rowNote(i, sources.join(", "), "OUT_OF_DOMAIN", {
              transform: block.names[k],
              value: String(first.values[i]),
              hint: "The result is too large to hold as a number: standardize the column first (z) or use a lower degree.",
            }),
          );
        }
      }
    });
    out.names.push(...block.names);
    out.columns.push(...block.columns);
    for (const note of block.notes) {
      // One note per row and source column is enough (several transforms of "age" share the cause).
      const k = `${note.row}\u0000${note.column}\u0000${note.code}`;
      if (!seen.has(k)) {
        seen.add(k);
        out.notes.push(note);
      }
    }
  }
  out.notes.sort((a, b) => a.row - b.row);
  return out;
}

/** Parse, fit on `training` and apply to `rows` in one call (rows default to the training rows). */
export function buildBasis(
  recipe: string,
  training: readonly BasisColumn[],
  rows: readonly BasisColumn[] = training,
): { state: RecipeState; block: BasisBlock } {
  const state = fitRecipe(parseRecipe(recipe), training, rows === training ? "data" : "training_data");
  return { state, block: applyRecipe(state, rows) };
}
