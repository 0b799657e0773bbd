/** Shared helpers of the binary-engine tests: fixture loading and named-tolerance comparisons. */
import * as fs from "fs";
import * as path from "path";
import type { DesignMatrix } from "../../../src/engine/types";

export function loadFixture<T = any>(name: string): T {
  return JSON.parse(fs.readFileSync(path.join(__dirname, "../../fixtures/binary", name), "utf8")) as T;
}

export function design(columns: Record<string, ArrayLike<number>>): DesignMatrix {
  const names = Object.keys(columns);
  const cols = names.map((k) => Float64Array.from(columns[k]));
  return { rows: cols.length ? cols[0].length : 0, columns: cols, names };
}

/**
 * Assert |got - expected| <= tol * max(|expected|, floor) element-wise, printing inputs on failure.
 * `floor` keeps the check meaningful for expected values near 0.
 */
export function expectClose(got: ArrayLike<number>, expected: ArrayLike<number>, tol: number, what: string, floor = 1e-8): void {
  if (got.length !== expected.length) throw new Error(`${what}: length ${got.length}, expected ${expected.length}`);
  for (let i = 0; i < expected.length; i++) {
    const g = got[i];
    const e = expected[i];
    const err = Math.abs(g - e);
    const scale = Math.max(Math.abs(e), floor);
    if (!(err <= tol * scale)) {
      throw new Error(`${what}[${i}]: expected ${e}, got ${g}; relative error ${err / scale} > tolerance ${tol}`);
    }
  }
}

export function expectScalarClose(got: number, expected: number, tol: number, what: string, floor = 1e-8): void {
  expectClose([got], [expected], tol, what, floor);
}
