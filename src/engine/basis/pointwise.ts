/**
 * Pointwise transforms of one column: log, log(1+x), square root and reciprocal, each with an
 * optional shift added before the function.
 *
 * Domain policy (one line): a value outside the function's domain (after the shift) gives NaN in
 * that row and an OUT_OF_DOMAIN row note; it never stops the other rows.
 * Shift rule for shift=auto, chosen from the training values (minimum m, maximum M), applied only
 * when the training values leave the domain, otherwise 0:
 *   log:   m <= 0        -> shift = 1 - m   (the smallest training value maps to log(1) = 0)
 *   log1p: m <= -1       -> shift = -m      (the smallest value maps to log1p(0) = 0)
 *   sqrt:  m < 0         -> shift = -m      (the smallest value maps to sqrt(0) = 0)
 *   inv:   m <= 0 <= M   -> shift = 1 - m   (zero inside the range; the smallest value maps to 1/1)
 * The chosen shift is stored, so new rows use the training shift (a new value below the training
 * minimum can still fall outside the domain: that row gets a note).
 * Reference: Box & Cox (1964), "An analysis of transformations", JRSS B 26:211-252 (shifted log
 * transforms); the auto rule is our own, stated above.
 */
import { problem } from "../messages";
import { type BasisBlock, type BasisColumn, finiteValues, formatForName, readNumbers, rowNote } from "./common";

/** The four pointwise functions. */
export type PointwiseFunction = "log" | "log1p" | "sqrt" | "inv";

/** Stored state of a pointwise transform. */
export interface PointwiseState {
  kind: "pointwise";
  source: string;
  fn: PointwiseFunction;
  /** Added to the value before the function. */
  shift: number;
  names: string[];
}

/** Options of {@link fitPointwise}: shift = a number, or "auto" (rule above) [0]. */
export interface PointwiseOptions {
  fn: PointwiseFunction;
  shift?: number | "auto";
}

const DOMAIN: Record<PointwiseFunction, { ok: (v: number) => boolean; f: (v: number) => number; hint: string }> = {
  log: { ok: (v) => v > 0, f: Math.log, hint: "log needs values above 0 (after any shift): set shift=auto or a larger shift." },
  log1p: { ok: (v) => v > -1, f: Math.log1p, hint: "log1p needs values above -1 (after any shift): set shift=auto or a larger shift." },
  sqrt: { ok: (v) => v >= 0, f: Math.sqrt, hint: "sqrt needs values of 0 or more (after any shift): set shift=auto or a larger shift." },
  inv: { ok: (v) => v !== 0, f: (v) => 1 / v, hint: "inv (1/x) is not defined at 0 (after any shift): set a shift that moves the values away from 0." },
};

/** Readable name: "log(x)", "log(x+3)", "log1p(x)", "sqrt(x-2)", "1/x", "1/(x+1)". */
export function pointwiseName(fn: PointwiseFunction, source: string, shift: number): string {
  const inner = shift === 0 ? source : `${source}${shift > 0 ? "+" : "-"}${formatForName(Math.abs(shift))}`;
  if (fn === "inv") return shift === 0 ? `1/${source}` : `1/(${inner})`;
  return `${fn}(${inner})`;
}

/** The shift chosen by shift=auto for training minimum m and maximum M (rule in the file comment). */
export function autoShift(fn: PointwiseFunction, m: number, M: number): number {
  switch (fn) {
    case "log":
      return m <= 0 ? 1 - m : 0;
    case "log1p":
      return m <= -1 ? -m : 0;
    case "sqrt":
      return m < 0 ? -m : 0;
    case "inv":
      return m <= 0 && M >= 0 ? 1 - m : 0;
  }
}

/**
 * Fit a pointwise transform: fixes the shift (a given number, or the auto rule on the training values).
 * @throws OddsmithError BASIS_NEEDS_NUMBERS for a text column, BASIS_TOO_FEW_VALUES when shift=auto
 *   has no training values to look at.
 * @example fitPointwise({ name: "income", values: [-2, 0, 5] }, { fn: "log", shift: "auto" }).shift // 3
 */
export function fitPointwise(column: BasisColumn, options: PointwiseOptions): PointwiseState {
  const x = finiteValues(readNumbers(column, options.fn, null, true));
  let shift = 0;
  if (options.shift === "auto") {
    if (x.length === 0) {
      throw problem("BASIS_TOO_FEW_VALUES", { transform: `${options.fn}(shift=auto)`, column: column.name, needed: 1, found: 0, hint: "Add training rows with numbers." });
    }
    let m = Infinity;
    let M = -Infinity;
    for (const v of x) {
      if (v < m) m = v;
      if (v > M) M = v;
    }
    shift = autoShift(options.fn, m, M);
  } else if (typeof options.shift === "number") {
    shift = options.shift;
  }
  return { kind: "pointwise", source: column.name, fn: options.fn, shift, names: [pointwiseName(options.fn, column.name, shift)] };
}

/** Apply a pointwise transform; out-of-domain, blank or text cells give NaN and a row note. */
export function applyPointwise(state: PointwiseState, column: BasisColumn): BasisBlock {
  const notes: BasisBlock["notes"] = [];
  const x = readNumbers(column, state.fn, notes);
  const { ok, f, hint } = DOMAIN[state.fn];
  const out = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) {
    if (Number.isNaN(x[i])) {
      out[i] = NaN;
      continue;
    }
    const v = x[i] + state.shift;
    if (!ok(v)) {
      out[i] = NaN;
      notes.push(
        rowNote(i, column.name, "OUT_OF_DOMAIN", {
          transform: state.names[0],
          value: formatForName(x[i]),
          hint,
        }),
      );
      continue;
    }
    out[i] = f(v);
  }
  return { names: [...state.names], columns: [out], notes };
}
