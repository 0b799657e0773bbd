/**
 * Reading the basis recipe state of a model description back, field by field: every transform's
 * stored state (knots, centres, scales, levels) as src/engine/basis/ writes it, checked for the
 * types and the few orderings that applying it relies on (ascending edges and knots, a boundary
 * with lower below upper, positive scales), so a damaged state is refused with the field named
 * rather than giving wrong basis columns.
 *
 * Reference: the state types of src/engine/basis/*.ts (our own format); docs/model-description.md.
 */
import type { BasisState } from "../basis";
import type { FitNote } from "../basis/common";
import type { LevelsState } from "../basis/levels";
import type { RecipeState } from "../basis/recipe";
import { ENGINE_MESSAGES, type MessageCode } from "../messages";
import {
  asList,
  asNumber,
  asObject,
  booleanField,
  childPath,
  choiceField,
  inconsistent,
  listField,
  numberField,
  numberListField,
  requireAscending,
  requireDistinct,
  textField,
  textListField,
  wrongField,
  type JsonObject,
} from "./descriptionFields";

const KINDS = ["raw", "poly", "products", "pointwise", "zscore", "minmax", "levels", "ns", "rbf", "bins"] as const;

function fitNotes(o: JsonObject, path: string): FitNote[] {
  return listField(o, "fitNotes", path, (v, p) => {
    const note = asObject(v, p);
    const code = textField(note, "code", p);
    if (!(code in ENGINE_MESSAGES)) wrongField(childPath(p, "code"), "a message code of Oddsmith's catalogue", code);
    return { code: code as MessageCode, message: textField(note, "message", p) };
  });
}

function levelsState(o: JsonObject, path: string, names: string[]): LevelsState {
  const levels = textListField(o, "levels", path);
  requireDistinct(levels, childPath(path, "levels"));
  const reference = textField(o, "reference", path);
  if (!levels.includes(reference)) inconsistent(childPath(path, "reference"), `"${reference}" is not one of its levels`);
  return {
    kind: "levels",
    source: textField(o, "source", path),
    levels,
    reference,
    pooled: textListField(o, "pooled", path),
    counts: listField(o, "counts", path, (v, p) => asNumber(v, p, { integer: true, min: 0 }), levels.length),
    names,
  };
}

function sources(o: JsonObject, path: string): string[] {
  const list = textListField(o, "sources", path);
  if (list.length === 0) wrongField(childPath(path, "sources"), "a list of at least one column name", list);
  return list;
}

/** The fields of each kind besides kind and names. */
function kindFields(kind: (typeof KINDS)[number], o: JsonObject, path: string, names: string[]): BasisState {
  const source = () => textField(o, "source", path);
  switch (kind) {
    case "raw":
      return { kind, source: source(), names };
    case "poly": {
      const degree = numberField(o, "degree", path, { integer: true, min: 1 });
      const state: BasisState = { kind, source: source(), degree, orthogonal: booleanField(o, "orthogonal", path), alpha: numberListField(o, "alpha", path), norm2: numberListField(o, "norm2", path), names };
      if (o.unit !== undefined) state.unit = numberField(o, "unit", path, { min: 0, open: true });
      return state;
    }
    case "products": {
      const src = sources(o, path);
      const terms = listField(o, "terms", path, (v, p) => asList(v, p, (x, q) => asNumber(x, q, { integer: true, min: 0 }), src.length));
      const levels = listField(o, "levels", path, (v, p) => (v === null ? null : levelsState(asObject(v, p), p, textListField(asObject(v, p), "names", p))), src.length);
      return { kind, sources: src, terms, levels, names };
    }
    case "pointwise":
      return { kind, source: source(), fn: choiceField(o, "fn", path, ["log", "log1p", "sqrt", "inv"] as const), shift: numberField(o, "shift", path), names };
    case "zscore":
      return { kind, source: source(), mean: numberField(o, "mean", path), sd: numberField(o, "sd", path, { min: 0, open: true }), names };
    case "minmax": {
      const min = numberField(o, "min", path);
      const max = numberField(o, "max", path);
      if (!(max > min)) inconsistent(childPath(path, "max"), `it must exceed min (${min})`);
      return { kind, source: source(), min, max, names };
    }
    case "levels":
      return levelsState(o, path, names);
    case "ns": {
      const knots = numberListField(o, "knots", path);
      requireAscending(knots, childPath(path, "knots"));
      const boundary = numberListField(o, "boundary", path, 2) as [number, number];
      requireAscending(boundary, childPath(path, "boundary"));
      if (knots.some((k) => !(k > boundary[0] && k < boundary[1]))) inconsistent(childPath(path, "knots"), "every interior knot must lie strictly inside the boundary");
      return { kind, source: source(), knots, boundary, names };
    }
    case "rbf": {
      const src = sources(o, path);
      return {
        kind,
        sources: src,
        means: numberListField(o, "means", path, src.length),
        sds: listField(o, "sds", path, (v, p) => asNumber(v, p, { min: 0, open: true }), src.length),
        centres: listField(o, "centres", path, (v, p) => asList(v, p, (x, q) => asNumber(x, q), src.length)),
        width: numberField(o, "width", path, { min: 0, open: true }),
        centreMethod: choiceField(o, "centreMethod", path, ["quantile", "kmeans"] as const),
        seed: numberField(o, "seed", path, { integer: true }),
        names,
        fitNotes: fitNotes(o, path),
      };
    }
    case "bins": {
      const edges = numberListField(o, "edges", path);
      requireAscending(edges, childPath(path, "edges"));
      return { kind, source: source(), edges, names, fitNotes: fitNotes(o, path) };
    }
  }
}

/** One transform's stored state. */
function basisState(value: unknown, path: string): BasisState {
  const o = asObject(value, path);
  const kind = choiceField(o, "kind", path, KINDS);
  const names = textListField(o, "names", path);
  if (names.length === 0) wrongField(childPath(path, "names"), "a list of at least one column name", names);
  return kindFields(kind, o, path, names);
}

/**
 * Read a basis recipe state (RecipeState, version 1) from a parsed description.
 * @param path - the field's path in the description, for messages ("basis")
 * @throws OddsmithError DESCRIPTION_FIELD or DESCRIPTION_INCONSISTENT naming the field
 */
export function readRecipeState(value: unknown, path: string): RecipeState {
  const o = asObject(value, path);
  if (o.version !== 1) wrongField(childPath(path, "version"), "1", o.version);
  const states = listField(o, "states", path, basisState);
  const names = textListField(o, "names", path);
  requireDistinct(names, childPath(path, "names"));
  const made = states.flatMap((s) => s.names);
  if (made.length !== names.length || made.some((n, k) => n !== names[k])) {
    inconsistent(childPath(path, "names"), "it must list the names of every state's columns, in order");
  }
  return {
    version: 1,
    recipe: textField(o, "recipe", path),
    states,
    names,
    fitNotes: fitNotes(o, path),
    trainingRows: numberField(o, "trainingRows", path, { integer: true, min: 0 }),
  };
}
