/**
 * The models whose exported formulas LibreOffice recalculates, fitted on public datasets committed
 * under test/fixtures (each case names its source):
 * - Spector & Mazzeo (1980) grades data (test/fixtures/binary/spector.json, from statsmodels);
 * - ANES 1996 extract shipped with statsmodels (test/fixtures/binary/spector.json `anes96`: vote,
 *   age, income and the text column educ; test/fixtures/multiclass/anes96.json: party
 *   identification in 7 classes, logpopul, selfLR), the same 944 rows in the same order.
 * Between them the cases use every basis transform the export writes as formulas.
 */
import type { CellValue } from "../../src/engine";
import spector from "../fixtures/binary/spector.json";
import anes from "../fixtures/multiclass/anes96.json";

export type Table = CellValue[][];

/** Columns with their headers as a table (header row first). */
export function tableOf(columns: Record<string, readonly CellValue[]>): Table {
  const names = Object.keys(columns);
  const n = columns[names[0]].length;
  const rows: Table = [names];
  for (let i = 0; i < n; i++) rows.push(names.map((k) => columns[k][i]));
  return rows;
}

/** One exported model: a sheet of its own with its ranges and the ODDS.FORMULAS arguments. */
export interface ExportCase {
  /** Sheet name (also the test's name). */
  sheet: string;
  source: string;
  labels: Table;
  /** The predictors range as the model reads it (ODDS.BASIS output when there is a recipe). */
  predictors: Table;
  /** Raw data columns and the recipe that made the predictors from them. */
  recipe?: string;
  data?: Table;
  /** Fit options as the cell takes them, e.g. "baseline=educ:High school graduate". */
  fitOptions?: string;
}

const SPECTOR = "Spector & Mazzeo (1980), J. Econ. Educ. 11:37-44, as shipped with statsmodels";
const ANES = "ANES 1996 extract shipped with statsmodels (statsmodels.datasets.anes96)";

const sp = spector.data;
const a = spector.anes96.data;
const [logpopul, selfLR] = [anes.X[0], anes.X[1]];
const pid = anes.y.map(String);

export const spectorLabels = tableOf({ GRADE: sp.GRADE });
export const spectorPredictors = tableOf({ GPA: sp.GPA, TUCE: sp.TUCE, PSI: sp.PSI });

/** The ANES raw columns the recipes read. */
const anesData = tableOf({ age: a.age, income: a.income, educ: a.educ, logpopul, selfLR });

/** The cases that go through ODDS.FORMULAS (recipes are applied with ODDS.BASIS by the test). */
export const FORMULA_CASES: ExportCase[] = [
  { sheet: "SpectorPlain", source: SPECTOR, labels: spectorLabels, predictors: spectorPredictors },
  {
    sheet: "SpectorSpline",
    source: SPECTOR,
    labels: spectorLabels,
    predictors: [],
    recipe: "GPA: ns(2); TUCE: opoly(2); PSI: raw",
    data: spectorPredictors,
  },
  {
    sheet: "AnesText",
    source: ANES,
    labels: tableOf({ vote: a.vote }),
    predictors: tableOf({ age: a.age, income: a.income, educ: a.educ }),
    fitOptions: "baseline=educ:High school graduate",
  },
  {
    sheet: "AnesPointwise",
    source: ANES,
    labels: tableOf({ vote: a.vote }),
    predictors: [],
    recipe: "age: log + sqrt + minmax; income: inv + log1p + z; selfLR: poly(3); educ: levels(ref=High school graduate)",
    data: anesData,
  },
  {
    sheet: "AnesBinsPairs",
    source: ANES,
    labels: tableOf({ vote: a.vote }),
    predictors: [],
    recipe: "age: bins(4); income: bins(3); selfLR, logpopul: pairs; age*educ; income*selfLR",
    data: anesData,
  },
  {
    sheet: "AnesRadial",
    source: ANES,
    labels: tableOf({ vote: a.vote }),
    predictors: [],
    recipe: "age, income: rbf(4); selfLR, logpopul: rbf(3, centres=kmeans); age: ns(3)",
    data: anesData,
  },
  {
    sheet: "PartyText",
    source: ANES,
    labels: tableOf({ PID: pid }),
    predictors: tableOf({ age: a.age, income: a.income, educ: a.educ, selfLR }),
    // The 13 rows of "1-8 grades" separate some classes: a small ridge penalty keeps estimates finite.
    fitOptions: "penalty=0.01",
  },
  {
    sheet: "PartyBasis",
    source: ANES,
    labels: tableOf({ PID: pid }),
    predictors: [],
    recipe: "age: ns(2); income: z; selfLR: minmax + bins(3); logpopul: sqrt(shift=3); educ: levels; age, selfLR: rbf(2)",
    data: anesData,
    fitOptions: "penalty=0.01; form=symmetric",
  },
];
