/** Shared helpers of the multi-class tests: fixture loading, design building, named-tolerance checks. */
import * as fs from "fs";
import * as path from "path";
import type { DesignMatrix } from "../../../src/engine/types";

const FIXTURES = path.join(__dirname, "../../fixtures/multiclass");

/** Read a JSON fixture of test/fixtures/multiclass. */
// eslint-disable-next-line @typescript-eslint/no-explicit-any
export function loadMulticlassFixture(name: string): any {
  return JSON.parse(fs.readFileSync(path.join(FIXTURES, name), "utf8"));
}

/** Columnar design from arrays of numbers. */
export function designOf(columns: number[][], names: string[]): DesignMatrix {
  return { rows: columns[0]?.length ?? 0, columns: columns.map((c) => Float64Array.from(c)), names };
}

/**
 * Expect every got[i] to agree with want[i] within rel * |want| + abs; on failure the message names
 * the label, index, expected, got and tolerance.
 */
export function expectAllClose(label: string, got: ArrayLike<number>, want: ArrayLike<number>, rel: number, abs = 0): void {
  expect(got.length).toBe(want.length);
  const bad: string[] = [];
  for (let i = 0; i < want.length; i++) {
    const tol = rel * Math.abs(want[i]) + abs;
    if (!(Math.abs(got[i] - want[i]) <= tol)) bad.push(`${label}[${i}]: expected ${want[i]}, got ${got[i]}, tolerance ${tol}`);
  }
  expect(bad).toEqual([]);
}

/** Scalar version of {@link expectAllClose}. */
export function expectClose(label: string, got: number, want: number, rel: number, abs = 0): void {
  expectAllClose(label, [got], [want], rel, abs);
}

/** Flatten per-equation arrays (equation by equation). */
export function flat(rows: ArrayLike<number>[]): number[] {
  return rows.flatMap((r) => Array.from(r));
}
