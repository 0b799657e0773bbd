/**
 * Benchmark case "firth": the largest bias-reduced (Firth) fit a cell function accepts, called the
 * way the sheet calls it (ODDS.FIT through the registry, firth=true), at rows x terms^2 equal to
 * FIRTH_WORK_LIMIT (src/engine/data/fitWork.ts): 1,100 rows x 149 predictors + intercept = 150 terms
 * (2.475e7; 2,500 rows x 100 terms is also at the work limit, but its inputs exceed the 5 MB payload of one call).
 * Target: every accepted call answers within a few seconds (goal: median under 5 s).
 *
 * Data: seeded (linear congruential generator, Numerical Recipes constants; Box-Muller normals), built
 * before the timed region; labels drawn from a logistic model of two predictors, so classes overlap
 * and the fit converges in a typical number of iterations. Each timed call clears the fit cache so
 * the fit itself is timed, not a cache hit.
 *
 * Alone: `npx tsx bench/firthLimit.ts` (prints the figures); inside `npm run bench -- --only=firth`
 * the result is written to RESULTS.md with the other cases.
 */
import { performance } from "perf_hooks";
import { FIRTH_WORK_LIMIT } from "../src/engine/data/fitWork";
import { evaluateCellFunction } from "../src/functions/registry";
import { modelCache } from "../src/shared/fitService";
import type { CellValue } from "../src/engine/types";

export interface FirthLimitInfo {
  ok: boolean;
  rows: number;
  terms: number;
  work: number;
  limit: number;
  /** Wall seconds of each timed call. */
  times: number[];
  median: number;
  /** Newton iterations reported by REPORT-equivalent diagnostics (from the cached model). */
  iterations?: number;
  error?: string;
}

/** Rows and predictors of the case: rows x (predictors + 1)^2 just under FIRTH_WORK_LIMIT, inputs within the payload. */
export const FIRTH_CASE = { rows: 1100, predictors: 149 } as const;

function seeded(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return (s + 0.5) / 4294967296;
  };
}

/** Labels and predictors ranges (header rows included) of the case. */
export function firthCaseRanges(rows: number = FIRTH_CASE.rows, predictors: number = FIRTH_CASE.predictors, seed = 20261204): { labels: CellValue[][]; predictors: CellValue[][] } {
  const u = seeded(seed);
  const normal = () => Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u());
  const X: CellValue[][] = [Array.from({ length: predictors }, (_, j) => `x${j + 1}`)];
  const Y: CellValue[][] = [["outcome"]];
  for (let i = 0; i < rows; i++) {
    const row = Array.from({ length: predictors }, normal);
    const eta = 0.4 * row[0] - 0.3 * row[1];
    X.push(row);
    Y.push([u() < 1 / (1 + Math.exp(-eta)) ? "yes" : "no"]);
  }
  return { labels: Y, predictors: X };
}

/** Time ODDS.FIT with firth=true at the work limit (`runs` timed calls after one warm-up). */
export function firthLimitCase(runs = 3): FirthLimitInfo {
  const { labels, predictors } = firthCaseRanges();
  const rows = FIRTH_CASE.rows;
  const terms = FIRTH_CASE.predictors + 1;
  const base: FirthLimitInfo = { ok: false, rows, terms, work: rows * terms * terms, limit: FIRTH_WORK_LIMIT, times: [], median: NaN };
  const options: CellValue[][] = [["firth=true"]];
  const times: number[] = [];
  try {
    for (let k = 0; k <= runs; k++) {
      modelCache().clear();
      const t0 = performance.now();
      const out = evaluateCellFunction("FIT", [labels, predictors, options]);
      const dt = (performance.now() - t0) / 1000;
      if (out[0][1] !== "term") throw new Error(`unexpected FIT output: ${JSON.stringify(out[0])}`);
      if (k > 0) times.push(dt); // the first call warms the compiler up
    }
  } catch (e) {
    return { ...base, error: (e as Error).message.split("\n")[0] };
  }
  const sorted = [...times].sort((a, b) => a - b);
  const report = evaluateCellFunction("REPORT", [labels, predictors, options]);
  const iterationsRow = report.find((r) => String(r[0]).toLowerCase().startsWith("iterations"));
  return { ...base, ok: true, times, median: sorted[sorted.length >> 1], iterations: iterationsRow ? Number(iterationsRow[1]) : undefined };
}

if (require.main === module) {
  const r = firthLimitCase();
  process.stdout.write(`${JSON.stringify(r, null, 2)}\n`);
}
