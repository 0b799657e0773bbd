/**
 * Reading the fields of a JSON document one by one, each check naming the field's path
 * ("equations[1].coefficients[3]") in the message, so a damaged model description says exactly
 * which field is wrong and what it should hold.
 *
 * Policy (one line each):
 * - A missing field and a field of the wrong type are the same problem (DESCRIPTION_FIELD).
 * - Numbers must be finite unless the field allows null (JSON's stand-in for an unavailable number).
 * - Fields a reader does not know are ignored (a newer minor version may add some).
 * Reference: our own rule, stated above (the JSON types are those of RFC 8259).
 */
import { problem } from "../messages";

/** A JSON object as read. */
export type JsonObject = Record<string, unknown>;

/** Longest text of a value quoted in a message. */
const SHOWN_TEXT = 40;

/** What a JSON value is, for a message: `nothing`, `null`, `the number 3`, `the text "abc"`, ... */
export function describeJson(value: unknown): string {
  if (value === undefined) return "missing";
  if (value === null) return "null";
  if (typeof value === "number") return `the number ${value}`;
  if (typeof value === "boolean") return `the value ${value}`;
  if (typeof value === "string") {
    const shown = value.length > SHOWN_TEXT ? `${value.slice(0, SHOWN_TEXT - 1)}\u2026` : value;
    return `the text "${shown}"`;
  }
  if (Array.isArray(value)) return `a list of ${value.length}`;
  return "an object";
}

/** Throw DESCRIPTION_FIELD for `field`. */
export function wrongField(field: string, expected: string, value: unknown): never {
  throw problem("DESCRIPTION_FIELD", { field, expected, got: describeJson(value) });
}

/** Throw DESCRIPTION_INCONSISTENT for `field`. */
export function inconsistent(field: string, reason: string): never {
  throw problem("DESCRIPTION_INCONSISTENT", { field, reason });
}

/** The path of `key` inside `path` ("" is the document itself). */
export function childPath(path: string, key: string | number): string {
  if (typeof key === "number") return `${path}[${key}]`;
  return path === "" ? key : `${path}.${key}`;
}

/** The value at `path` as an object. */
export function asObject(value: unknown, path: string): JsonObject {
  if (value === null || typeof value !== "object" || Array.isArray(value)) wrongField(path || "(the document)", "an object", value);
  return value as JsonObject;
}

/** Field `key` of `o` as an object. */
export function objectField(o: JsonObject, key: string, path: string): JsonObject {
  return asObject(o[key], childPath(path, key));
}

/** The value at `path` as text (`nonEmpty`: at least one character). */
export function asText(value: unknown, path: string, nonEmpty = false): string {
  if (typeof value !== "string" || (nonEmpty && value === "")) wrongField(path, nonEmpty ? "a text of at least one character" : "a text", value);
  return value;
}

/** Field `key` of `o` as text. */
export function textField(o: JsonObject, key: string, path: string, nonEmpty = false): string {
  return asText(o[key], childPath(path, key), nonEmpty);
}

/** Field `key` of `o` as text or null. */
export function maybeTextField(o: JsonObject, key: string, path: string): string | null {
  return o[key] === null ? null : textField(o, key, path);
}

/** Field `key` of `o` as true or false. */
export function booleanField(o: JsonObject, key: string, path: string): boolean {
  const v = o[key];
  if (typeof v !== "boolean") wrongField(childPath(path, key), "true or false", v);
  return v;
}

/** Bounds of a number field; each is inclusive unless named open. */
export interface NumberRule {
  integer?: boolean;
  min?: number;
  max?: number;
  /** Exclude `min` and `max` themselves. */
  open?: boolean;
}

function ruleText(rule: NumberRule): string {
  const kind = rule.integer ? "a whole number" : "a finite number";
  const lo = rule.min === undefined ? "" : rule.open ? ` above ${rule.min}` : ` of at least ${rule.min}`;
  const hi = rule.max === undefined ? "" : rule.open ? ` below ${rule.max}` : ` of at most ${rule.max}`;
  return `${kind}${lo}${lo && hi ? " and" : ""}${hi}`;
}

/** The value at `path` as a number within `rule`. */
export function asNumber(value: unknown, path: string, rule: NumberRule = {}): number {
  const ok =
    typeof value === "number" &&
    Number.isFinite(value) &&
    (!rule.integer || Number.isInteger(value)) &&
    (rule.min === undefined || (rule.open ? value > rule.min : value >= rule.min)) &&
    (rule.max === undefined || (rule.open ? value < rule.max : value <= rule.max));
  if (!ok) wrongField(path, ruleText(rule), value);
  return value as number;
}

/** Field `key` of `o` as a number within `rule`. */
export function numberField(o: JsonObject, key: string, path: string, rule: NumberRule = {}): number {
  return asNumber(o[key], childPath(path, key), rule);
}

/** The value at `path` as a finite number, or NaN for null (an unavailable number). */
export function asMaybeNumber(value: unknown, path: string): number {
  if (value === null) return NaN;
  if (typeof value !== "number" || !Number.isFinite(value)) wrongField(path, "a finite number or null", value);
  return value;
}

/** Field `key` of `o` as a finite number, or NaN for null. */
export function maybeNumberField(o: JsonObject, key: string, path: string): number {
  return asMaybeNumber(o[key], childPath(path, key));
}

/** Field `key` of `o` as one of `values`. */
export function choiceField<const T extends string>(o: JsonObject, key: string, path: string, values: readonly T[]): T {
  const v = o[key];
  if (typeof v !== "string" || !(values as readonly string[]).includes(v)) {
    wrongField(childPath(path, key), `one of ${values.map((x) => `"${x}"`).join(", ")}`, v);
  }
  return v as T;
}

/** The value at `path` as a list, each item read by `item` (given its own path). */
export function asList<T>(value: unknown, path: string, item: (v: unknown, path: string) => T, length?: number): T[] {
  if (!Array.isArray(value)) wrongField(path, length === undefined ? "a list" : `a list of ${length}`, value);
  if (length !== undefined && value.length !== length) wrongField(path, `a list of ${length}`, value);
  return value.map((v, k) => item(v, childPath(path, k)));
}

/** Field `key` of `o` as a list (see asList). */
export function listField<T>(o: JsonObject, key: string, path: string, item: (v: unknown, path: string) => T, length?: number): T[] {
  return asList(o[key], childPath(path, key), item, length);
}

/** Field `key` of `o` as a list of texts. */
export function textListField(o: JsonObject, key: string, path: string, length?: number): string[] {
  return listField(o, key, path, (v, p) => asText(v, p), length);
}

/** Field `key` of `o` as a list of finite numbers. */
export function numberListField(o: JsonObject, key: string, path: string, length?: number): number[] {
  return listField(o, key, path, (v, p) => asNumber(v, p), length);
}

/** Throw DESCRIPTION_INCONSISTENT unless `names` has no repeats. */
export function requireDistinct(names: readonly string[], field: string): void {
  const seen = new Set<string>();
  for (const n of names) {
    if (seen.has(n)) inconsistent(field, `"${n}" appears twice`);
    seen.add(n);
  }
}

/** Throw DESCRIPTION_INCONSISTENT unless the list is strictly ascending. */
export function requireAscending(values: readonly number[], field: string): void {
  for (let k = 1; k < values.length; k++) {
    if (!(values[k] > values[k - 1])) inconsistent(field, `its numbers must rise strictly, but item ${k} (${values[k]}) does not exceed item ${k - 1} (${values[k - 1]})`);
  }
}
