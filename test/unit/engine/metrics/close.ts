/** Shared check helper for the metric tests: relative closeness with a floor, printing what differed. */

/**
 * Expect |got - expected| <= relTol * max(1, |expected|). Relative with a floor of 1 so values near
 * zero are compared absolutely. The failure message names the quantity, both values and the tolerance.
 */
export function expectClose(got: number, expected: number, relTol: number, what: string): void {
  const scale = Math.max(1, Math.abs(expected));
  const diff = Math.abs(got - expected);
  if (!(diff <= relTol * scale)) {
    throw new Error(`${what}: expected ${expected}, got ${got} (difference ${diff}, tolerance ${relTol} x ${scale})`);
  }
}

/** Element-wise {@link expectClose} with equal lengths. */
export function expectAllClose(got: ArrayLike<number>, expected: ArrayLike<number>, relTol: number, what: string): void {
  expect([what, got.length]).toEqual([what, expected.length]);
  for (let i = 0; i < expected.length; i++) expectClose(got[i], expected[i], relTol, `${what}[${i}]`);
}

/** Run `fn`, expect an OddsmithError with this code, and return it for further checks of its text. */
export function expectProblem(fn: () => unknown, code: string): Error & { code: string; params: Record<string, unknown> } {
  let caught: unknown;
  try {
    fn();
  } catch (e) {
    caught = e;
  }
  expect(caught).toBeDefined();
  const e = caught as Error & { code: string; params: Record<string, unknown>; name: string };
  expect([e.name, e.code, e.message]).toEqual(["OddsmithError", code, e.message]);
  return e;
}

export const f64 = (values: number[]): Float64Array => Float64Array.from(values);
