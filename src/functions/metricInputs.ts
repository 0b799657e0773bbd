/**
 * Reading the (labels, probabilities) pair of the metric cell functions: LOGLOSS, AUC, CONFUSION,
 * CALIBRATION. Ranges go through the shared range parser (readTable) and label reader (readLabels),
 * so blanks, numbers-as-text and headers mean what they mean everywhere else.
 *
 * Policy (one line each):
 * - labels is one column; probabilities one column (positive-class probability, two classes) or one
 *   column per class. Both ranges must be equally tall (header rows included). Under headers=auto
 *   they share one header decision: the range with the stronger evidence decides for both; when a
 *   range with strong evidence of its own (a number in its first row, or a name over numbers) is
 *   overruled, the metric asks which is meant (METRIC_HEADERS_DISAGREE) instead of dropping or
 *   inventing a row; other problems met while the first rows disagreed carry HEADER_RULE_HINT.
 * - Probability columns are matched to classes by their header names, "P(yes)" or "yes" (the header
 *   ODDS.PROB writes); without a header, several columns follow the classes' sorted order.
 * - Two classes and one column: the column is the positive class's probability. The positive class is
 *   the `positive` option, else the class the column's header names, else the labels' default rule.
 * - A row whose label is blank, or whose probability cells are all blank (a row ODDS.PROB left blank
 *   because it was skipped by the fit), is skipped and counted; a row with some but not all class
 *   probabilities blank is an error (METRIC_MISSING_VALUE) naming the sheet row.
 * - Every probability lies in [0, 1] (BAD_PROBABILITY, naming the sheet row), for every metric alike.
 * - Row numbers in every message are 1-based rows of the ranges as selected (header row = row 1).
 * - Labels of one class only: AUC and CALIBRATION refuse (METRIC_NEEDS_BOTH_CLASSES: they compare
 *   the classes). LOGLOSS and CONFUSION are defined once it is known which class the probabilities are
 *   for: the positive option, else the probability column's header ("P(yes)"); one unnamed column is
 *   METRIC_CLASS_UNNAMED. The absent class is the other class the column or option names, or the
 *   partner of a recognized pair (1/0, TRUE/FALSE, yes/no, y/n), else "not <class>". One column's header names a class only as "P(class)" or as the present class.
 * - An error value (#N/A, #DIV/0!, ...) in either range is refused (ERROR_VALUE_CELL, naming the
 *   cell): a metric over silently fewer rows would look like a result for all of them.
 */
import { agreeHeaders, withHeaderHint, compareText, matchClass, readLabels, readTable, type LabelInfo, type Table, type TableColumn, type CellValue } from "../engine";
import { OddsmithError, codeOf, listNames, problem } from "../shared/messages";

export interface MetricInputOptions {
  /** Function name as the user sees it, for messages ("ODDS.AUC"). */
  fn: string;
  positive?: string | null;
  headers?: "auto" | "yes" | "no";
  /** True for metrics defined for two classes only (AUC, CALIBRATION). */
  binaryOnly?: boolean;
}

export interface MetricInputs {
  kind: "binary" | "multiclass";
  /** Binary: [negative, positive]. Multi-class: one class per probability column, in column order. */
  classes: string[];
  positiveClass?: string;
  /** Binary: 1 for the positive class, 0 otherwise, per used row. */
  y: Float64Array;
  /** Binary: probability of the positive class per used row. */
  p: Float64Array;
  /** Multi-class: observed class index per used row (into `classes`). */
  classIndex: Int32Array;
  /** Multi-class: one array per class column, per used row. */
  probabilities: Float64Array[];
  rowsUsed: number;
  rowsSkipped: number;
  /** 1-based row of the labels range (as selected) of each used row. */
  sheetRows: Int32Array;
  /** True when the ranges' first row was read as names (one decision for both). */
  header: boolean;
  /** Data rows of the labels range as selected (trailing blank rows included). */
  dataRows: number;
}

/** Why a metric refuses an error cell (ERROR_VALUE_CELL). */
const METRIC_ERROR_REASON = "a metric over fewer rows than selected would be misread";

/** "P(yes)" -> "yes"; "yes" -> "yes". */
export function classFromHeader(name: string): string {
  const m = /^\s*P\s*\((.*)\)\s*$/i.exec(name);
  return (m ? m[1] : name).trim();
}

/** The labels' classes in sorted order (readLabels puts a binary problem as [negative, positive]). */
function sortedClasses(info: LabelInfo): string[] {
  if (info.kind === "multiclass") return info.classes.slice();
  const c = info.classes.slice();
  if (info.source === "text") return c.sort(compareText);
  const value = (s: string) => (s === "TRUE" ? 1 : s === "FALSE" ? 0 : Number(s));
  return c.sort((a, b) => value(a) - value(b));
}

function dataHeight(t: Table): number {
  return t.rows + t.trimmedRows;
}

function numericColumnValues(table: Table, j: number): Float64Array {
  const col = table.columns[j];
  if (col.kind === "text") {
    const i = col.values.findIndex((v, k) => !col.missing[k]);
    throw problem("NOT_A_NUMBER", { argument: table.argument, row: table.firstRow + i, column: j + 1, value: col.values[i] });
  }
  return col.values;
}

/** Which class each probability column holds (null when the columns have no class names). */
function columnClasses(table: Table, labelClasses: readonly string[], source: LabelInfo["source"]): (string | null)[] {
  if (!table.header) return table.columns.map(() => null);
  return table.names.map((name) => {
    const wanted = classFromHeader(name);
    try {
      return matchClass(labelClasses, wanted, source, "positive");
    } catch {
      return wanted;
    }
  });
}

/**
 * Read and align the labels and probabilities of a metric call.
 * @throws OddsmithError SINGLE_COLUMN_NEEDED, RANGE_SHAPE_MISMATCH, NOT_A_NUMBER, PROBABILITY_COLUMN_COUNT,
 *   PROBABILITY_COLUMN_MISSING, BINARY_METRIC_ONLY, METRIC_MISSING_VALUE, NO_USABLE_ROWS, and the
 *   label problems of readLabels (ONE_CLASS_ONLY, TOO_MANY_CLASSES, CLASS_NOT_FOUND)
 */
export function readMetricInputs(
  labelCells: CellValue[][],
  probabilityCells: CellValue[][],
  options: MetricInputOptions,
): MetricInputs {
  const headers = options.headers ?? "auto";
  // The two ranges share one header decision (the engine's header-agreement rule; probabilities win a tie).
  const ranges = [
    { argument: "labels", cells: labelCells },
    { argument: "probabilities", cells: probabilityCells },
  ];
  const agreement = agreeHeaders(ranges, headers);
  // A metric is one number or a small table with no place for a note: when a range whose first row
  // is surely data or surely names (a number, or a name over numbers) is overruled, reading either
  // way would drop or invent a row, so ask. Weak evidence (text that does not recur) yields quietly.
  if (agreement.disagreement && agreement.overruledEvidence === "strong") throw problem("METRIC_HEADERS_DISAGREE", agreement.disagreement);
  const agreed = agreement.header ? "yes" : "no";
  return withHeaderHint(agreement, () => readAgreedInputs(labelCells, probabilityCells, agreed, options));
}

function readAgreedInputs(labelCells: CellValue[][], probabilityCells: CellValue[][], agreed: "yes" | "no", options: MetricInputOptions): MetricInputs {
  const labelTable = readTable(labelCells, { argument: "labels", headers: agreed, errors: "refuse", errorReason: METRIC_ERROR_REASON });
  if (labelTable.columns.length !== 1) {
    throw problem("SINGLE_COLUMN_NEEDED", { argument: "labels", columns: labelTable.columns.length });
  }
  const probTable = readTable(probabilityCells, { argument: "probabilities", headers: agreed, namePrefix: "column ", errors: "refuse", errorReason: METRIC_ERROR_REASON });
  // Both ranges must cover the same rows: same header decision, same number of data rows (counted
  // as selected, before trailing blank rows are trimmed).
  if (dataHeight(labelTable) !== dataHeight(probTable) || labelTable.header !== probTable.header) {
    throw problem("RANGE_SHAPE_MISMATCH", {
      argument: "probabilities",
      got: dataHeight(probTable),
      expectedArgument: "labels",
      expected: dataHeight(labelTable),
    });
  }
  const columns = probTable.columns.map((_, j) => numericColumnValues(probTable, j));
  const n = dataHeight(labelTable);
  const cellAt = (col: Float64Array, i: number) => (i < col.length ? col[i] : NaN);

  // Rows kept: a label and at least one probability.
  let labelColumn: TableColumn = labelTable.columns[0];
  let use: Uint8Array = new Uint8Array(labelTable.rows);
  for (let i = 0; i < labelTable.rows; i++) {
    if (labelColumn.missing[i]) continue;
    if (columns.some((c) => !Number.isNaN(cellAt(c, i)))) use[i] = 1;
  }
  if (!use.some((u) => u === 1)) {
    throw problem("NO_USABLE_ROWS", { missing: `labels ${countMissing(labelColumn.missing)}, probabilities blank in the other rows` });
  }
  // One class present: defined for LOGLOSS and CONFUSION once the probability column says which
  // class it is for (oneClassLabels); AUC and CALIBRATION compare the two classes and are undefined.
  const oneClass = oneClassLabels(labelColumn, use, probTable, columns.length, options);
  if (oneClass) {
    labelColumn = oneClass.column;
    use = oneClass.use;
  }
  const firstPass = readLabels(labelColumn, { use });
  const named = columnClasses(probTable, firstPass.classes, firstPass.source);

  let kind: "binary" | "multiclass";
  let classes: string[];
  let info: LabelInfo;
  let columnOf: number[];
  if (columns.length === 1) {
    if (firstPass.kind !== "binary") {
      throw problem("PROBABILITY_COLUMN_COUNT", { got: 1, count: firstPass.classes.length, classes: listNames(firstPass.classes) });
    }
    const headerClass = named[0] !== null && firstPass.classes.includes(named[0]) ? named[0] : null;
    info = readLabels(labelColumn, { use, positive: options.positive ?? headerClass });
    kind = "binary";
    classes = info.classes;
    columnOf = [0];
  } else {
    const binary = firstPass.kind === "binary";
    if (options.binaryOnly && !binary) {
      throw problem("BINARY_METRIC_ONLY", { fn: options.fn, count: firstPass.classes.length, classes: listNames(firstPass.classes) });
    }
    let columnClassNames: string[];
    if (named.every((c) => c !== null)) columnClassNames = named as string[];
    else {
      // Unnamed columns follow the sorted class order, which needs one column per class.
      const sorted = sortedClasses(firstPass);
      if (sorted.length !== columns.length) {
        throw problem("PROBABILITY_COLUMN_COUNT", { got: columns.length, count: sorted.length, classes: listNames(sorted) });
      }
      columnClassNames = sorted;
    }
    for (const c of firstPass.classes) {
      if (!columnClassNames.includes(c)) {
        throw problem("PROBABILITY_COLUMN_MISSING", { label: c, headers: listNames(probTable.names, 8) });
      }
    }
    if (binary && (options.binaryOnly || columns.length === 2)) {
      // Two classes with a column each: the positive class's column is the probability.
      info = readLabels(labelColumn, { use, positive: options.positive ?? null });
      kind = "binary";
      classes = info.classes;
      columnOf = [columnClassNames.indexOf(info.positiveClass as string)];
    } else {
      info = firstPass;
      kind = "multiclass";
      classes = columnClassNames;
      columnOf = columnClassNames.map((_, j) => j);
    }
  }

  const used: number[] = [];
  for (let i = 0; i < labelTable.rows; i++) if (use[i]) used.push(i);
  const m = used.length;
  const sheetRows = new Int32Array(m);
  const y = new Float64Array(kind === "binary" ? m : 0);
  const p = new Float64Array(kind === "binary" ? m : 0);
  const classIndex = new Int32Array(kind === "multiclass" ? m : 0);
  const probabilities = kind === "multiclass" ? columnOf.map(() => new Float64Array(m)) : [];
  for (let r = 0; r < m; r++) {
    const i = used[r];
    sheetRows[r] = labelTable.firstRow + i;
    for (const j of columnOf) {
      if (Number.isNaN(cellAt(columns[j], i))) {
        // Some class probabilities blank, others not: an incomplete row, not a skipped one.
        throw problem("METRIC_MISSING_VALUE", { argument: "probabilities", row: sheetRows[r] });
      }
      // One rule for every metric (AUC too, although a ranking would not need it): probabilities lie in [0, 1].
      const v = columns[j][i];
      if (!(v >= 0 && v <= 1)) throw problem("BAD_PROBABILITY", { row: sheetRows[r], value: v });
    }
    if (kind === "binary") {
      y[r] = info.codes[i] === 1 ? 1 : 0;
      p[r] = columns[columnOf[0]][i];
    } else {
      classIndex[r] = classes.indexOf(info.classes[info.codes[i]]);
      for (let j = 0; j < columnOf.length; j++) probabilities[j][r] = columns[columnOf[j]][i];
    }
  }
  return {
    kind,
    classes,
    positiveClass: kind === "binary" ? info.positiveClass : undefined,
    y,
    p,
    classIndex,
    probabilities,
    rowsUsed: m,
    rowsSkipped: n - m,
    sheetRows,
    header: labelTable.header,
    dataRows: n,
  };
}

/** Partner of a recognized pair (1/0, TRUE/FALSE, yes/no, y/n) in the same letter case, else "not <label>". */
function absentClass(label: string): string {
  const pairs: Record<string, string> = { "1": "0", "0": "1", true: "false", false: "true", yes: "no", no: "yes", y: "n", n: "y" };
  const partner = pairs[label.toLowerCase()];
  if (partner === undefined) return `not ${label}`;
  if (label === label.toUpperCase()) return partner.toUpperCase();
  if (label[0] === label[0].toUpperCase()) return partner[0].toUpperCase() + partner.slice(1);
  return partner;
}

/**
 * Labels of one class only, for the metrics defined then: the label column with one added row per
 * class that the probabilities name but no row holds (marked usable, beyond the table's rows, so the
 * label reader sees two or more classes under its usual rules and no real row changes). Null when the
 * labels hold two or more classes.
 * @throws OddsmithError METRIC_NEEDS_BOTH_CLASSES (binary-only metrics), METRIC_CLASS_UNNAMED
 */
function oneClassLabels(
  column: TableColumn,
  use: Uint8Array,
  probTable: Table,
  columnCount: number,
  options: MetricInputOptions,
): { column: TableColumn; use: Uint8Array } | null {
  let present: string;
  try {
    readLabels(column, { use });
    return null;
  } catch (error) {
    if (!(error instanceof OddsmithError) || codeOf(error) !== "ONE_CLASS_ONLY") throw error;
    present = String(error.params.label);
  }
  if (options.binaryOnly) throw problem("METRIC_NEEDS_BOTH_CLASSES", { metric: options.fn, label: `"${present}"` });
  const source: LabelInfo["source"] = column.kind === "text" ? "text" : column.kind === "boolean" ? "boolean" : "number";
  const isPresent = (name: string): boolean => {
    try {
      matchClass([present], name, source, "positive");
      return true;
    } catch {
      return false;
    }
  };
  const positive = options.positive != null && String(options.positive).trim() !== "" ? String(options.positive).trim() : null;
  let named: string[];
  if (columnCount === 1) {
    // One column's header names a class when it reads "P(class)" or is the present class itself
    // (a plain name such as "p" or "score" names none).
    const header = probTable.header ? probTable.names[0] : "";
    const headerClass = /^\s*P\s*\(.*\)\s*$/i.test(header) || (header !== "" && isPresent(header)) ? classFromHeader(header) : "";
    const wanted = positive ?? headerClass;
    if (wanted === "") throw problem("METRIC_CLASS_UNNAMED", { label: present });
    named = [isPresent(wanted) ? absentClass(present) : wanted];
  } else {
    if (!probTable.header) throw problem("METRIC_CLASS_UNNAMED", { label: present });
    named = probTable.names.map(classFromHeader).filter((c) => !isPresent(c));
  }
  // The added classes keep the column's kind when they can (numbers stay numbers, TRUE/FALSE booleans).
  const asNumber = (c: string): number => (source === "boolean" ? (/^(true|yes|y|1)$/i.test(c) ? 1 : /^(false|no|n|0)$/i.test(c) ? 0 : NaN) : c.trim() === "" ? NaN : Number(c));
  const keepKind = column.kind !== "text" && named.every((c) => Number.isFinite(asNumber(c)));
  const n = column.missing.length;
  const missing = new Uint8Array(n + named.length);
  missing.set(column.missing);
  const grown = new Uint8Array(n + named.length).fill(1);
  grown.set(use);
  if (keepKind) {
    const values = new Float64Array(n + named.length);
    values.set(column.values as Float64Array);
    named.forEach((c, k) => (values[n + k] = asNumber(c)));
    return { column: { name: column.name, kind: column.kind as "number" | "boolean", values, missing }, use: grown };
  }
  const text = column.kind === "text" ? (column.values as string[]) : Array.from(column.values as Float64Array, (v, i) => (column.missing[i] ? "" : column.kind === "boolean" ? (v === 1 ? "TRUE" : "FALSE") : String(v)));
  return { column: { name: column.name, kind: "text", values: [...text, ...named], missing }, use: grown };
}

function countMissing(missing: Uint8Array): number {
  let k = 0;
  for (const v of missing) k += v;
  return k;
}

/**
 * Run a metric on inputs read by {@link readMetricInputs}, re-mapping the row numbers of its
 * messages from positions among the used rows to rows of the ranges as selected.
 */
export function withSheetRows<T>(inputs: MetricInputs, body: () => T): T {
  try {
    return body();
  } catch (error) {
    if (error instanceof OddsmithError && typeof error.params.index === "number") {
      const index = error.params.index;
      const row = index >= 0 && index < inputs.sheetRows.length ? inputs.sheetRows[index] : error.params.row;
      throw problem(codeOf(error), { ...error.params, row });
    }
    throw error;
  }
}
