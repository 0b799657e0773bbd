/**
 * Range check for numeric metric options (threshold, level, eps). Internal to src/engine/metrics.
 * An omitted option (undefined or null, as Excel passes it) takes the default.
 */

import { problem } from "../messages";

/**
 * Return `value` (or `fallback` when it is undefined/null) after checking lower < value < upper,
 * or lower <= value <= upper when `closed` is true.
 * @throws BAD_OPTION_VALUE naming the option and the allowed range
 * @example checkOptionValue("level", undefined, 0.95, 0, 1, false) // 0.95
 */
export function checkOptionValue(
  name: string,
  value: number | null | undefined,
  fallback: number,
  lower: number,
  upper: number,
  closed: boolean,
): number {
  if (value === undefined || value === null) return fallback;
  const ok = closed ? value >= lower && value <= upper : value > lower && value < upper;
  if (!ok) {
    const range = closed ? `from ${lower} to ${upper}` : `strictly between ${lower} and ${upper}`;
    throw problem("BAD_OPTION_VALUE", { name, value, expected: `Give a number ${range}.` });
  }
  return value;
}
