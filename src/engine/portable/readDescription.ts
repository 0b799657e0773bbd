/**
 * readDescription: a model description's text (or parsed JSON) checked field by field and returned
 * as a ModelDescription that restoreModel can score with.
 *
 * Policy (one line each):
 * - First the document must be JSON, an object, with format "oddsmith-model" (else it is not ours).
 * - Then the version rule of modelDescription.ts: formatVersion "major.minor"; a newer major is
 *   refused with DESCRIPTION_NEWER before any other field is read (its fields may mean other
 *   things); the same major with any minor is read, ignoring fields this reader does not know.
 * - Every field the format defines is checked for its type and range, and the fields that must
 *   agree are checked against each other (classes and equations, terms and encodings, lengths of
 *   coefficients, aliased flags and covariance); the first problem is thrown naming the field.
 * - A term that is not aliased must have a coefficient (a null there would score as NaN).
 * Reference: docs/model-description.md (our own format); version rule after Semantic Versioning 2.0.0.
 */
import { MAX_CLASSES } from "../data/labels";
import type { ColumnEncoding } from "../data/design";
import { INTERCEPT_TERM } from "../inference";
import { problem } from "../messages";
import {
  asList,
  asMaybeNumber,
  asNumber,
  asObject,
  booleanField,
  childPath,
  choiceField,
  describeJson,
  inconsistent,
  listField,
  maybeNumberField,
  maybeTextField,
  numberField,
  objectField,
  requireDistinct,
  textField,
  textListField,
  wrongField,
  type JsonObject,
} from "./descriptionFields";
import { DESCRIPTION_FORMAT, DESCRIPTION_MAJOR, DESCRIPTION_VERSION, type DescribedColumnSummary, type DescribedEquation, type ModelDescription } from "./modelDescription";
import { readRecipeState } from "./readRecipeState";

const VERSION_PATTERN = /^(\d+)\.(\d+)$/;

/** The parsed document, or DESCRIPTION_NOT_JSON. */
function parseDocument(input: unknown, argument: string): JsonObject {
  let value = input;
  if (typeof input === "string") {
    try {
      value = JSON.parse(input);
    } catch (e) {
      throw problem("DESCRIPTION_NOT_JSON", { argument, reason: `the JSON parser stopped: ${(e as Error).message}` });
    }
  }
  if (value === null || typeof value !== "object" || Array.isArray(value)) {
    throw problem("DESCRIPTION_NOT_JSON", { argument, reason: `it is ${describeJson(value)}, not a JSON object` });
  }
  return value as JsonObject;
}

/** The format and version checks, before anything else is read. */
function checkVersion(doc: JsonObject, argument: string): void {
  if (doc.format !== DESCRIPTION_FORMAT) throw problem("DESCRIPTION_NOT_OURS", { argument, got: describeJson(doc.format) });
  const version = textField(doc, "formatVersion", "");
  const m = VERSION_PATTERN.exec(version);
  if (!m || Number(m[1]) < 1) wrongField("formatVersion", 'a version "major.minor" such as "1.0"', version);
  if (Number(m[1]) > DESCRIPTION_MAJOR) {
    const producer = doc.producer as JsonObject | null;
    const by = producer && typeof producer === "object" && typeof producer.version === "string" ? producer.version : "(unknown)";
    throw problem("DESCRIPTION_NEWER", { version, producer: by, supported: DESCRIPTION_VERSION, major: DESCRIPTION_MAJOR });
  }
}

function readLabel(doc: JsonObject, kind: ModelDescription["kind"], form: ModelDescription["form"]): ModelDescription["label"] {
  const o = objectField(doc, "label", "");
  const classes = textListField(o, "classes", "label");
  requireDistinct(classes, "label.classes");
  if (kind === "binary" ? classes.length !== 2 : classes.length < 3 || classes.length > MAX_CLASSES) {
    wrongField("label.classes", kind === "binary" ? "a list of 2 classes" : `a list of 3 to ${MAX_CLASSES} classes`, classes);
  }
  const positiveClass = maybeTextField(o, "positiveClass", "label");
  const referenceClass = maybeTextField(o, "referenceClass", "label");
  if (kind === "binary" && positiveClass !== classes[1]) inconsistent("label.positiveClass", `a binary model's positive class is the second of label.classes ("${classes[1]}")`);
  if (form === "reference" && (referenceClass === null || !classes.includes(referenceClass))) {
    inconsistent("label.referenceClass", "the reference form needs a reference class that is one of label.classes");
  }
  return { name: textField(o, "name", "label"), classes, positiveClass, referenceClass };
}

/** The classes of the equations each form has, in the order the fit writes them. */
function expectedEquationClasses(form: ModelDescription["form"], label: ModelDescription["label"]): string[] {
  if (form === "binary") return [label.classes[1]];
  if (form === "reference") return label.classes.filter((c) => c !== label.referenceClass);
  return [...label.classes];
}

function readEquations(doc: JsonObject, want: string[], terms: number, aliased: boolean[]): DescribedEquation[] {
  const raw = asList(doc.equations, "equations", (v) => v, want.length);
  return raw.map((v, k) => {
    const path = childPath("equations", k);
    const o = asObject(v, path);
    const cls = textField(o, "class", path);
    if (cls !== want[k]) inconsistent(childPath(path, "class"), `equation ${k + 1} of this form predicts "${want[k]}"`);
    const coefficients = listField(o, "coefficients", path, (x, p) => (x === null ? null : asNumber(x, p)), terms);
    coefficients.forEach((b, j) => {
      if (b === null && !aliased[j]) wrongField(childPath(childPath(path, "coefficients"), j), "a finite number (the term is not aliased)", b);
    });
    return { class: cls, coefficients };
  });
}

function readColumnEncoding(value: unknown, path: string): ColumnEncoding {
  const o = asObject(value, path);
  const name = textField(o, "name", path);
  const kind = choiceField(o, "kind", path, ["number", "category", "ignored"] as const);
  const terms = textListField(o, "terms", path);
  if (kind === "ignored") {
    if (terms.length) wrongField(childPath(path, "terms"), "an empty list (an ignored column makes no term)", terms);
    return { name, kind, terms };
  }
  if (kind === "number") {
    if (terms.length !== 1 || terms[0] !== name) inconsistent(childPath(path, "terms"), `a number column makes the one term "${name}"`);
    return { name, kind, source: choiceField(o, "source", path, ["number", "boolean"] as const), terms };
  }
  const levels = textListField(o, "levels", path);
  requireDistinct(levels, childPath(path, "levels"));
  const reference = textField(o, "reference", path);
  if (!levels.includes(reference)) inconsistent(childPath(path, "reference"), `"${reference}" is not one of its levels`);
  if (terms.length !== levels.length - 1) inconsistent(childPath(path, "terms"), `a text column of ${levels.length} levels makes ${levels.length - 1} terms`);
  return { name, kind, levels, reference, pooled: textListField(o, "pooled", path), terms };
}

function readPredictors(doc: JsonObject, terms: string[], intercept: boolean): ModelDescription["predictors"] {
  const o = objectField(doc, "predictors", "");
  const columns = listField(o, "columns", "predictors", readColumnEncoding);
  requireDistinct(columns.map((c) => c.name), "predictors.columns (names)");
  const made = columns.flatMap((c) => c.terms);
  const own = intercept ? terms.slice(1) : terms;
  if ((intercept && terms[0] !== INTERCEPT_TERM) || made.length !== own.length || made.some((t, k) => t !== own[k])) {
    inconsistent("terms", `they must be ${intercept ? `"${INTERCEPT_TERM}" followed by ` : ""}the terms of predictors.columns, in order`);
  }
  return { header: booleanField(o, "header", "predictors"), columns };
}

function readSummary(value: unknown, path: string): DescribedColumnSummary {
  const o = asObject(value, path);
  const name = textField(o, "name", path);
  const kind = choiceField(o, "kind", path, ["number", "category"] as const);
  const count = numberField(o, "count", path, { integer: true, min: 0 });
  if (kind === "number") {
    const [min, max, mean] = (["min", "max", "mean"] as const).map((k) => maybeNumberField(o, k, path));
    return { name, kind, count, min, max, mean };
  }
  const levels = listField(o, "levels", path, (v, p) => {
    const l = asObject(v, p);
    return { level: textField(l, "level", p), count: numberField(l, "count", p, { integer: true, min: 0 }) };
  });
  return { name, kind, count, levels };
}

function readData(doc: JsonObject, classes: number): ModelDescription["data"] {
  const o = objectField(doc, "data", "");
  const whole = { integer: true, min: 0 };
  return {
    rowsUsed: numberField(o, "rowsUsed", "data", whole),
    observations: numberField(o, "observations", "data", { min: 0 }),
    rowsSkipped: numberField(o, "rowsSkipped", "data", whole),
    classCounts: listField(o, "classCounts", "data", (v, p) => asNumber(v, p, { min: 0 }), classes),
    columns: listField(o, "columns", "data", readSummary),
  };
}

function readOptions(doc: JsonObject): ModelDescription["options"] {
  const o = objectField(doc, "options", "");
  return {
    threshold: numberField(o, "threshold", "options", { min: 0, max: 1, open: true }),
    penalty: numberField(o, "penalty", "options", { min: 0 }),
    penalized: booleanField(o, "penalized", "options"),
    biasReduced: booleanField(o, "biasReduced", "options"),
    level: numberField(o, "level", "options", { min: 0, max: 1, open: true }),
    intervalMethod: choiceField(o, "intervalMethod", "options", ["wald", "profile"] as const),
  };
}

function readFitSummary(doc: JsonObject): ModelDescription["fit"] {
  const o = objectField(doc, "fit", "");
  const maybe = (k: string) => {
    const x = maybeNumberField(o, k, "fit");
    return Number.isNaN(x) ? null : x;
  };
  return {
    converged: booleanField(o, "converged", "fit"),
    iterations: numberField(o, "iterations", "fit", { integer: true, min: 0 }),
    logLikelihood: maybe("logLikelihood"),
    nullLogLikelihood: maybe("nullLogLikelihood"),
    deviance: maybe("deviance"),
    aic: maybe("aic"),
    bic: maybe("bic"),
    parameters: numberField(o, "parameters", "fit", { integer: true, min: 0 }),
    diagnostics: listField(o, "diagnostics", "fit", (v, p) => {
      const d = asObject(v, p);
      return { code: textField(d, "code", p), severity: textField(d, "severity", p), message: textField(d, "message", p) };
    }),
  };
}

function readCovariance(doc: JsonObject, size: number): (number | null)[] | null {
  if (doc.covariance === null) return null;
  return asList(doc.covariance, "covariance", (v, p) => {
    const x = asMaybeNumber(v, p);
    return Number.isNaN(x) ? null : x;
  }, size * size);
}

function readOffset(doc: JsonObject, kind: ModelDescription["kind"]): ModelDescription["offset"] {
  if (doc.offset === null) return null;
  if (kind !== "binary") inconsistent("offset", "only a binary model has an offset; a multi-class one has null here");
  return { column: textField(objectField(doc, "offset", ""), "column", "offset", true) };
}

/**
 * Read and check a model description (see the policy above).
 * @param input - the description's JSON text, or the value JSON.parse made of it
 * @param argument - what the caller calls the input, for messages ("description")
 * @throws OddsmithError DESCRIPTION_NOT_JSON, DESCRIPTION_NOT_OURS, DESCRIPTION_NEWER,
 *   DESCRIPTION_FIELD or DESCRIPTION_INCONSISTENT, each naming what to do
 * @example readDescription(JSON.stringify(describeModel(model, { name: "crates", producerVersion: "0.1.0" }))).terms
 */
export function readDescription(input: unknown, argument = "description"): ModelDescription {
  const doc = parseDocument(input, argument);
  checkVersion(doc, argument);
  const producer = objectField(doc, "producer", "");
  const kind = choiceField(doc, "kind", "", ["binary", "multiclass"] as const);
  const form = choiceField(doc, "form", "", kind === "binary" ? (["binary"] as const) : (["reference", "symmetric"] as const));
  const label = readLabel(doc, kind, form);
  const terms = textListField(doc, "terms", "");
  requireDistinct(terms, "terms");
  const intercept = booleanField(doc, "intercept", "");
  const aliased = listField(doc, "aliased", "", (v, p) => (typeof v === "boolean" ? v : wrongField(p, "true or false", v)), terms.length);
  const want = expectedEquationClasses(form, label);
  const predictors = readPredictors(doc, terms, intercept);
  return {
    format: DESCRIPTION_FORMAT,
    formatVersion: doc.formatVersion as string,
    producer: { name: textField(producer, "name", "producer"), version: textField(producer, "version", "producer") },
    created: maybeTextField(doc, "created", ""),
    name: textField(doc, "name", "", true),
    kind,
    form,
    label,
    terms,
    intercept,
    equations: readEquations(doc, want, terms.length, aliased),
    aliased,
    covariance: readCovariance(doc, want.length * terms.length),
    predictors,
    basis: doc.basis === null ? null : readRecipeState(doc.basis, "basis"),
    offset: readOffset(doc, kind),
    options: readOptions(doc),
    data: readData(doc, label.classes.length),
    fit: readFitSummary(doc),
  };
}
