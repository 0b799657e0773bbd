/**
 * Labels: turn the label column of a table into classes.
 *
 * Policy (each rule is repeated in one line above the code that applies it):
 * - Class names: text labels as trimmed text (case-sensitive), numbers as their shortest text
 *   (1 -> "1", 2.5 -> "2.5"), booleans as "TRUE"/"FALSE".
 * - Sorted order: numbers by value, booleans FALSE before TRUE, text case-insensitively by code unit
 *   (ties broken case-sensitively), with no locale rules, so every machine sorts alike.
 * - Two classes make a binary problem. The positive class is the one named by the caller; otherwise
 *   the "yes" member of a recognized pair (1/0, TRUE/FALSE, yes/no, y/n, case-insensitive); otherwise
 *   the second class in sorted order. Outputs always name it (ModelFit.positiveClass).
 * - More than two classes make a multi-class problem; the reference class is the one named by the
 *   caller, otherwise the first in sorted order.
 * - A named class matches exactly first, then by numeric value (a numeric label column: "1.0" names 1),
 *   then case-insensitively when that is unambiguous; booleans also answer to yes/no and 1/0.
 * - A numeric label column looks like a measurement, not classes (TOO_MANY_CLASSES), when it has more
 *   than 10 distinct values, or more than 2 distinct values of which any is not a whole number.
 * - Any label column with more than 50 distinct classes is TOO_MANY_LABELS: an identifier or
 *   free-text column, not classes, and a softmax fit's cost grows with the square of the number of
 *   classes (hundreds of classes would block the workbook for minutes).
 * - Only rows marked usable (when a mask is given) define the classes; fewer than two classes among
 *   them is ONE_CLASS_ONLY.
 */
import { listNames, problem } from "../messages";
import type { TableColumn } from "./table";
import { checkClassCount } from "./validate";

/** The class-count limits live with the other input checks (validate.ts); re-exported for callers of the label reader. */
export { MAX_CLASSES, MAX_NUMERIC_CLASSES } from "./validate";

/** Classes found in a label column. */
export interface LabelInfo {
  /** Name of the label column. */
  name: string;
  kind: "binary" | "multiclass";
  /**
   * Class names. Binary: [negative, positive]. Multi-class: sorted order (the reference class is at
   * `referenceIndex`).
   */
  classes: string[];
  /** Binary: the positive class. */
  positiveClass?: string;
  /** Multi-class: the reference class and its index into `classes`. */
  referenceClass?: string;
  referenceIndex: number;
  /** Class index per row; -1 for a missing label or a row outside the usable mask. */
  codes: Int32Array;
  /** Rows per class, parallel to `classes`. */
  counts: number[];
  /** How the column was typed. */
  source: "number" | "boolean" | "text";
}

export interface ReadLabelsOptions {
  /** Positive class for a binary problem, by name (null/undefined = default rule). */
  positive?: string | null;
  /** Reference class for a multi-class problem, by name (null/undefined = first in sorted order). */
  reference?: string | null;
  /** 1 for rows that may define classes (complete rows); all rows when omitted. */
  use?: Uint8Array | null;
}

const YES = new Set(["1", "true", "yes", "y"]);
const NO = new Set(["0", "false", "no", "n"]);

/** Locale-free text order: case-insensitive, ties broken by code units. */
export function compareText(a: string, b: string): number {
  const la = a.toLowerCase();
  const lb = b.toLowerCase();
  if (la !== lb) return la < lb ? -1 : 1;
  return a < b ? -1 : a > b ? 1 : 0;
}

/**
 * Read a label column into classes under the policy at the top of this file.
 *
 * @throws OddsmithError ONE_CLASS_ONLY, TOO_MANY_CLASSES, TOO_MANY_LABELS, CLASS_NOT_FOUND.
 * @example
 * readLabels(readTable([["yes"], ["no"], ["yes"]], { argument: "labels", headers: "no" }).columns[0])
 * // { kind: "binary", classes: ["no", "yes"], positiveClass: "yes", codes: [1, 0, 1], ... }
 */
export function readLabels(column: TableColumn, opts: ReadLabelsOptions = {}): LabelInfo {
  const n = column.missing.length;
  const use = opts.use ?? null;
  const source: LabelInfo["source"] = column.kind === "text" ? "text" : column.kind === "boolean" ? "boolean" : "number";

  // Collect distinct values among usable, non-missing rows: each row's value is looked up once (a code
  // in order of first appearance), its key text made once per distinct value.
  const text = column.kind === "text" ? (column.values as string[]) : null;
  const numbers = column.kind === "text" ? null : (column.values as Float64Array);
  const codeOfText = new Map<string, number>();
  const codeOfNumber = new Map<number, number>();
  const keys: string[] = [];
  const keyCount: number[] = [];
  const keyNumber: number[] = [];
  const rowCode = new Int32Array(n).fill(-1);
  let usable = 0;
  for (let i = 0; i < n; i++) {
    if (column.missing[i] || (use && !use[i])) continue;
    usable++;
    let code: number | undefined;
    if (text) {
      const v = text[i];
      code = codeOfText.get(v);
      if (code === undefined) {
        code = keys.length;
        codeOfText.set(v, code);
        keys.push(v);
        keyCount.push(0);
        keyNumber.push(NaN);
      }
    } else {
      const x = (numbers as Float64Array)[i];
      code = codeOfNumber.get(x);
      if (code === undefined) {
        code = keys.length;
        codeOfNumber.set(x, code);
        keys.push(column.kind === "boolean" ? (x === 1 ? "TRUE" : "FALSE") : String(x));
        keyCount.push(0);
        keyNumber.push(x);
      }
    }
    keyCount[code]++;
    rowCode[i] = code;
  }
  // (0 and -0 are one key, "0", as String() writes both.)
  const countByKey = new Map<string, number>();
  const numericByKey = new Map<string, number>();
  keys.forEach((k, c) => {
    countByKey.set(k, (countByKey.get(k) ?? 0) + keyCount[c]);
    if (column.kind !== "text") numericByKey.set(k, keyNumber[c]);
  });
  let sorted = [...countByKey.keys()];
  // Sorted order: numbers by value, booleans FALSE before TRUE, text case-insensitively.
  if (column.kind === "text") sorted.sort(compareText);
  else sorted.sort((a, b) => (numericByKey.get(a) as number) - (numericByKey.get(b) as number));

  // The distinct labels must make classes (validate.ts: measurement, identifier column, one class).
  checkClassCount(sorted, usable, source === "number" ? (k) => numericByKey.get(k) as number : null);

  let classes: string[];
  let positiveClass: string | undefined;
  let referenceClass: string | undefined;
  let referenceIndex = 0;
  if (sorted.length === 2) {
    let pos: string;
    if (opts.positive != null && String(opts.positive).trim() !== "") {
      pos = matchClass(sorted, String(opts.positive), source, "positive");
    } else {
      // Default positive: the "yes" member of a recognized pair, else the second in sorted order.
      const [a, b] = sorted;
      const recognized = YES.has(a.toLowerCase()) && NO.has(b.toLowerCase());
      pos = recognized ? a : b;
    }
    classes = [sorted.find((c) => c !== pos) as string, pos];
    positiveClass = pos;
    referenceIndex = 0;
  } else {
    classes = sorted;
    if (opts.reference != null && String(opts.reference).trim() !== "") {
      referenceClass = matchClass(sorted, String(opts.reference), source, "reference");
    } else {
      // Default reference: the first class in sorted order.
      referenceClass = sorted[0];
    }
    referenceIndex = classes.indexOf(referenceClass);
  }
  const index = new Map(classes.map((c, i) => [c, i] as [string, number]));
  const classOfCode = Int32Array.from(keys, (k) => index.get(k) as number);
  const codes = new Int32Array(n).fill(-1);
  for (let i = 0; i < n; i++) if (rowCode[i] >= 0) codes[i] = classOfCode[rowCode[i]];
  return {
    name: column.name,
    kind: classes.length === 2 ? "binary" : "multiclass",
    classes,
    positiveClass,
    referenceClass,
    referenceIndex,
    codes,
    counts: classes.map((c) => countByKey.get(c) as number),
    source,
  };
}

/**
 * Find the class a user named. Exact match, then numeric value (numeric labels), then
 * case-insensitive when unambiguous; booleans also answer to yes/no and 1/0.
 * @throws OddsmithError CLASS_NOT_FOUND listing the classes found.
 */
export function matchClass(
  classes: readonly string[],
  name: string,
  source: LabelInfo["source"],
  role: "positive" | "reference",
): string {
  const wanted = name.trim();
  if (classes.includes(wanted)) return wanted;
  if (source === "number") {
    const x = Number(wanted);
    const hit = classes.find((c) => wanted !== "" && Number(c) === x);
    if (hit !== undefined) return hit;
  }
  const lower = wanted.toLowerCase();
  if (source === "boolean") {
    if (YES.has(lower)) return "TRUE";
    if (NO.has(lower)) return "FALSE";
  }
  const hits = classes.filter((c) => c.toLowerCase() === lower);
  if (hits.length === 1) return hits[0];
  throw problem("CLASS_NOT_FOUND", { role, label: wanted, classes: listNames(classes, 12) });
}
