/**
 * Formula evaluation for the preview workbench: the cells of the in-memory workbook that hold
 * =ODDS.* formulas are computed by the same adapters Excel calls (src/functions/registry.ts), over
 * the values of the referenced ranges.
 *
 * Supported formula forms (enough for what the task pane and a person write in the workbench):
 * - =ODDS.NAME(arg, arg, ...) where an argument is a reference (A1, B2:D40, C:D, Sheet!A1:B9,
 *   'Sheet name'!A1:B9), a number, a "text" (with "" for a quote), TRUE/FALSE, a nested call, or
 *   left empty (an omitted optional argument, passed as null as Excel does);
 * - CHOOSECOLS(range, i, j, ...) to pick columns of a range (negative i counts from the right), which
 *   the pane uses when predictor columns are not next to each other;
 * - =reference, =number, ="text".
 * Anything else shows #NAME? with a message saying what the workbench can evaluate.
 *
 * Error policy: an argument range holding an error value passes the first such error on without
 * calling the function (as Excel does for functions declared with ranges); a function's own failure
 * shows its cell error (#VALUE! or #N/A) and the catalogue message.
 */
import { CellFunctionFailure } from "../functions/cellError";
import { evaluateCellFunction } from "../functions/registry";
import type { CellValue } from "../engine";
import type { EvaluationContext, FormulaOutcome } from "../taskpane/memoryPort";

/** Error values a cell can show. */
export const ERROR_VALUES = ["#VALUE!", "#N/A", "#SPILL!", "#NAME?", "#CYCLE!", "#REF!", "#DIV/0!", "#NUM!"] as const;

export function isErrorValue(v: CellValue): v is string {
  return typeof v === "string" && (ERROR_VALUES as readonly string[]).includes(v);
}

type Node =
  | { type: "call"; name: string; args: (Node | null)[] }
  | { type: "ref"; sheet: string | null; address: string }
  | { type: "number"; value: number }
  | { type: "text"; value: string }
  | { type: "bool"; value: boolean };

/** A formula the workbench cannot read; becomes #NAME? with this message. */
class FormulaSyntax extends Error {}

/** A cell error to show, with its message. */
class CellErrorOutcome extends Error {
  constructor(
    readonly error: string,
    message: string,
  ) {
    super(message);
  }
}

const SUPPORTED = "The preview workbench evaluates ODDS.* functions, CHOOSECOLS and plain references.";

/** Parse formula text (with its leading "=") into a tree. */
export function parseFormula(formula: string): Node {
  const text = formula.slice(1);
  let i = 0;
  const ws = () => {
    while (i < text.length && /\s/.test(text[i])) i++;
  };
  const fail = (what: string): never => {
    throw new FormulaSyntax(`Could not read the formula at "${text.slice(i, i + 12)}": ${what}. ${SUPPORTED}`);
  };

  function expr(): Node {
    ws();
    const c = text[i];
    if (c === '"') {
      let s = "";
      i++;
      for (;;) {
        if (i >= text.length) fail("a text without its closing quote");
        if (text[i] === '"') {
          if (text[i + 1] === '"') {
            s += '"';
            i += 2;
            continue;
          }
          i++;
          break;
        }
        s += text[i++];
      }
      return { type: "text", value: s };
    }
    const num = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?/.exec(text.slice(i));
    if (num && (c === "-" || c === "+" || c === "." || /\d/.test(c))) {
      // A leading digit could also start a row reference ("2:5"); a number is never followed by ":".
      if (text[i + num[0].length] !== ":") {
        i += num[0].length;
        return { type: "number", value: Number(num[0]) };
      }
    }
    // Quoted sheet name.
    let sheet: string | null = null;
    if (c === "'") {
      const m = /^'((?:[^']|'')+)'!/.exec(text.slice(i));
      if (!m) fail("a quoted sheet name without '!'");
      sheet = m![1].replace(/''/g, "'");
      i += m![0].length;
    }
    const word = /^[A-Za-z_$][A-Za-z0-9_.$]*/.exec(text.slice(i)) ?? /^\$?\d+/.exec(text.slice(i));
    if (!word) return fail("an unexpected character");
    const w = word[0];
    i += w.length;
    ws();
    if (sheet === null && text[i] === "(") {
      i++;
      const args: (Node | null)[] = [];
      ws();
      if (text[i] === ")") {
        i++;
        return { type: "call", name: w.toUpperCase(), args };
      }
      for (;;) {
        ws();
        if (text[i] === "," || text[i] === ")") args.push(null);
        else args.push(expr());
        ws();
        if (text[i] === ",") {
          i++;
          continue;
        }
        if (text[i] === ")") {
          i++;
          break;
        }
        fail("a missing ',' or ')'");
      }
      return { type: "call", name: w.toUpperCase(), args };
    }
    if (sheet === null && text[i] === "!") {
      sheet = w;
      i++;
      const cell = /^\$?[A-Za-z]{1,3}\$?\d+|^\$?[A-Za-z]{1,3}|^\$?\d+/.exec(text.slice(i));
      if (!cell) fail("a sheet name without a cell address");
      i += cell![0].length;
      return rangeTail(sheet, cell![0]);
    }
    if (sheet !== null) return rangeTail(sheet, w);
    if (/^true$/i.test(w)) return { type: "bool", value: true };
    if (/^false$/i.test(w)) return { type: "bool", value: false };
    return rangeTail(null, w);
  }

  function rangeTail(sheet: string | null, first: string): Node {
    if (text[i] === ":") {
      i++;
      const second = /^\$?[A-Za-z]{1,3}\$?\d+|^\$?[A-Za-z]{1,3}|^\$?\d+/.exec(text.slice(i));
      if (!second) fail("a range without its second corner");
      i += second![0].length;
      return { type: "ref", sheet, address: `${first}:${second![0]}`.replace(/\$/g, "") };
    }
    if (!/^\$?[A-Za-z]{1,3}\$?\d+$/.test(first)) fail(`"${first}" is not a cell address or a function`);
    return { type: "ref", sheet, address: first.replace(/\$/g, "") };
  }

  const tree = expr();
  ws();
  if (i < text.length) fail("text after the end of the formula");
  return tree;
}

type Value = CellValue[][];

function firstError(v: Value): string | null {
  for (const row of v) for (const c of row) if (isErrorValue(c)) return c;
  return null;
}

function evaluateNode(node: Node, context: EvaluationContext): Value {
  switch (node.type) {
    case "number":
    case "text":
    case "bool":
      return [[node.value]];
    case "ref":
      return context.readRange(node.sheet, node.address);
    case "call": {
      const args = node.args.map((a) => (a === null ? null : evaluateNode(a, context)));
      for (const a of args) {
        const err = a && firstError(a);
        if (err) throw new CellErrorOutcome(err, `An input of ${node.name} holds the error ${err}; fix that cell first.`);
      }
      if (node.name === "CHOOSECOLS") return chooseColumns(args);
      if (!node.name.startsWith("ODDS.")) {
        throw new CellErrorOutcome("#NAME?", `${node.name} is not known here. ${SUPPORTED}`);
      }
      try {
        return evaluateCellFunction(node.name, args);
      } catch (e) {
        if (e instanceof CellFunctionFailure) throw new CellErrorOutcome(e.cellError, e.message);
        throw e;
      }
    }
  }
}

function chooseColumns(args: (Value | null)[]): Value {
  const [range, ...picks] = args;
  if (!range || picks.length === 0) throw new CellErrorOutcome("#VALUE!", "CHOOSECOLS needs a range and at least one column number.");
  const width = range[0]?.length ?? 0;
  const columns = picks.map((p) => {
    const n = p?.[0]?.[0];
    if (typeof n !== "number" || !Number.isInteger(n) || n === 0 || Math.abs(n) > width) {
      throw new CellErrorOutcome("#VALUE!", `CHOOSECOLS: column ${String(n)} is outside 1..${width}.`);
    }
    return n > 0 ? n - 1 : width + n;
  });
  return range.map((row) => columns.map((c) => row[c] ?? null));
}

/**
 * The workbench's formula evaluator (plug into MemoryWorkbook). Never throws: every problem becomes
 * a cell error with a message.
 */
export function evaluateFormula(formula: string, context: EvaluationContext): FormulaOutcome {
  try {
    const tree = parseFormula(formula);
    return { values: evaluateNode(tree, context) };
  } catch (e) {
    if (e instanceof CellErrorOutcome) return { error: e.error, message: e.message };
    if (e instanceof FormulaSyntax) return { error: "#NAME?", message: e.message };
    return { error: "#VALUE!", message: "The workbench could not evaluate this formula." };
  }
}
