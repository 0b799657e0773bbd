/**
 * Indicator (dummy) columns for a categorical column, with a reference level that gets no column.
 *
 * Level policy (one line each):
 * - A level is the cell's text with surrounding spaces removed; numbers become their text ("3").
 *   Matching is exact and case-sensitive, as in the shared range parser (table.ts): "North" and
 *   "north" are two levels.
 * - Levels are listed in order of first appearance in the training rows.
 * - Reference level: the one given (ref=...), else the most frequent training level (first seen
 *   wins a tie), so results do not depend on alphabetical order.
 * - Rare levels (optional): a level seen in fewer than `minCount` training rows, or in a smaller
 *   share than `minShare` of them, is pooled into one "(other)" level (never the reference level).
 * - A level not seen in training gives NaN in all this column's indicators for that row and an
 *   UNSEEN_LEVEL note (also when pooling is on: "(other)" holds only the rare training levels).
 * Reference: treatment (reference-cell) coding, e.g. Agresti, Categorical Data Analysis, 3rd ed.,
 * sec. 5.3.
 */
import { listNames, problem } from "../messages";
import { type BasisBlock, type BasisColumn, rowNote } from "./common";

/** Name of the pooled level of rare categories. */
export const OTHER_LEVEL = "(other)";

/** Stored state of an indicator coding. */
export interface LevelsState {
  kind: "levels";
  source: string;
  /** All kept training levels, in order of first appearance; excludes pooled ones. */
  levels: string[];
  reference: string;
  /** Training levels pooled into "(other)" (empty when no pooling happened). */
  pooled: string[];
  /** Training count per kept level, parallel to `levels`. */
  counts: number[];
  names: string[];
}

/** Options of {@link fitLevels}. */
export interface LevelsOptions {
  /** Reference level (matched exactly after trimming surrounding spaces). */
  ref?: string;
  /** Pool levels with fewer training rows than this into "(other)". */
  minCount?: number;
  /** Pool levels with a smaller share (0..1) of the training rows than this into "(other)". */
  minShare?: number;
}

/** The level text of a cell, or null for a blank. */
export function levelText(v: number | string | null): string | null {
  if (v === null) return null;
  const s = typeof v === "number" ? String(v) : v.trim();
  return s === "" ? null : s;
}

const key = (s: string) => s;

/**
 * Fit indicator coding: find the levels, pool rare ones, pick the reference.
 * @throws OddsmithError LEVEL_NOT_FOUND for an unknown ref; BASIS_TOO_FEW_VALUES when fewer than two
 *   levels remain.
 * @example fitLevels({ name: "region", values: ["North", "South", "North"] }).names // ["region=South"]
 */
export function fitLevels(column: BasisColumn, options: LevelsOptions = {}): LevelsState {
  const spelling = new Map<string, string>();
  const count = new Map<string, number>();
  let total = 0;
  for (const v of column.values) {
    const s = levelText(v);
    if (s === null) continue;
    const k = key(s);
    if (!spelling.has(k)) spelling.set(k, s);
    count.set(k, (count.get(k) ?? 0) + 1);
    total++;
  }
  const order = [...spelling.keys()];
  let refKey: string;
  if (options.ref !== undefined) {
    refKey = key(options.ref.trim());
    if (!spelling.has(refKey)) {
      throw problem("LEVEL_NOT_FOUND", { level: options.ref, column: `"${column.name}"`, levels: listNames(order.map((k) => spelling.get(k)!), 8) });
    }
  } else {
    refKey = order[0];
    for (const k of order) if ((count.get(k) ?? 0) > (count.get(refKey) ?? 0)) refKey = k;
  }
  const isRare = (k: string) => {
    if (k === refKey) return false;
    const c = count.get(k)!;
    return (options.minCount !== undefined && c < options.minCount) || (options.minShare !== undefined && c < options.minShare * total);
  };
  const pooledKeys = order.filter(isRare);
  const kept = order.filter((k) => !isRare(k));
  const nLevels = kept.length + (pooledKeys.length > 0 ? 1 : 0);
  if (refKey === undefined || nLevels < 2) {
    throw problem("BASIS_TOO_FEW_VALUES", {
      transform: "levels",
      column: column.name,
      needed: 2,
      found: nLevels,
      hint: "Indicator columns need at least two categories (after pooling rare ones): leave the column out or lower the pooling threshold.",
    });
  }
  const levels = kept.map((k) => spelling.get(k)!);
  const reference = spelling.get(refKey)!;
  const names = levels.filter((l) => l !== reference).map((l) => `${column.name}=${l}`);
  if (pooledKeys.length > 0) names.push(`${column.name}=${OTHER_LEVEL}`);
  return {
    kind: "levels",
    source: column.name,
    levels,
    reference,
    pooled: pooledKeys.map((k) => spelling.get(k)!),
    counts: kept.map((k) => count.get(k)!),
    names,
  };
}

/** Apply indicator coding (blank: NaN and MISSING_FOR_SCORING; unseen level: NaN and UNSEEN_LEVEL). */
export function applyLevels(state: LevelsState, column: BasisColumn): BasisBlock {
  const notes: BasisBlock["notes"] = [];
  const n = column.values.length;
  const slot = new Map<string, number>();
  let j = 0;
  for (const l of state.levels) if (l !== state.reference) slot.set(key(l), j++);
  const otherSlot = state.pooled.length > 0 ? j : -1;
  for (const l of state.pooled) slot.set(key(l), otherSlot);
  slot.set(key(state.reference), -1);
  const columns = state.names.map(() => new Float64Array(n));
  column.values.forEach((v, i) => {
    const s = levelText(v);
    const k = s === null ? null : key(s);
    if (k === null || !slot.has(k)) {
      for (const col of columns) col[i] = NaN;
      if (k === null) notes.push(rowNote(i, column.name, "MISSING_FOR_SCORING", {}));
      else {
        const known = state.levels.concat(state.pooled);
        notes.push(rowNote(i, column.name, "UNSEEN_LEVEL", { value: s, levels: listNames(known, 8) }));
      }
      return;
    }
    const at = slot.get(k)!;
    if (at >= 0) columns[at][i] = 1;
  });
  return { names: [...state.names], columns, notes };
}
