/**
 * The penalty grid (log-spaced or given) and the choice from a path: lowest mean and the
 * one-standard-error rule (Breiman et al. 1984; Hastie, Tibshirani & Friedman 2009, section 7.10),
 * and the fold summary those use.
 */
import { acrossFolds } from "../../../../src/engine/evaluation/foldSummary";
import { choosePenalty } from "../../../../src/engine/evaluation/penaltyChoice";
import { givenPenalties, logSpacedPenalties, MAX_PENALTIES } from "../../../../src/engine/evaluation/penaltyGrid";
import { expectProblem } from "../metrics/close";

describe("penalty grid", () => {
  test("log-spaced penalties: equal steps of log10 between the ends, 4 significant digits", () => {
    expect(logSpacedPenalties(0.01, 100, 5)).toEqual([0.01, 0.1, 1, 10, 100]);
    expect(logSpacedPenalties(1, 10, 3)).toEqual([1, 3.162, 10]);
  });
  test("bad ends or counts are refused", () => {
    expectProblem(() => logSpacedPenalties(0, 10, 5), "BAD_OPTION_VALUE");
    expectProblem(() => logSpacedPenalties(10, 1, 5), "BAD_OPTION_VALUE");
    expectProblem(() => logSpacedPenalties(1, 10, 1), "BAD_OPTION_VALUE");
    expectProblem(() => logSpacedPenalties(1, 10, MAX_PENALTIES + 1), "BAD_OPTION_VALUE");
  });
  test("given penalties are sorted; negative, repeated or too many are refused", () => {
    expect(givenPenalties([1, 0, 0.1])).toEqual([0, 0.1, 1]);
    expectProblem(() => givenPenalties([1, -1]), "BAD_OPTION_VALUE");
    expectProblem(() => givenPenalties([1, 1]), "BAD_OPTION_VALUE");
    expectProblem(() => givenPenalties([]), "BAD_OPTION_VALUE");
    expectProblem(() => givenPenalties(Array.from({ length: MAX_PENALTIES + 1 }, (_, i) => i)), "BAD_OPTION_VALUE");
  });
});

describe("choosePenalty", () => {
  const path = [
    { penalty: 0.01, mean: 0.52, standardError: 0.03 },
    { penalty: 0.1, mean: 0.5, standardError: 0.03 },
    { penalty: 1, mean: 0.52, standardError: 0.02 },
    { penalty: 10, mean: 0.531, standardError: 0.02 },
    { penalty: 100, mean: 0.7, standardError: 0.01 },
  ];
  test("lowest mean, and the largest penalty within one SE of it", () => {
    expect(choosePenalty(path)).toEqual({ lowest: 1, oneSe: 2 });
  });
  test("entries without a mean take no part; a tie of means goes to the larger penalty", () => {
    const withGap = [{ penalty: 0, mean: NaN, standardError: NaN }, ...path];
    expect(choosePenalty(withGap)).toEqual({ lowest: 2, oneSe: 3 });
    expect(choosePenalty([{ penalty: 1, mean: 0.4, standardError: 0 }, { penalty: 2, mean: 0.4, standardError: 0 }])).toEqual({ lowest: 1, oneSe: 1 });
  });
  test("the order of the entries does not matter", () => {
    const reversed = [...path].reverse();
    const c = choosePenalty(reversed);
    expect([reversed[c.lowest].penalty, reversed[c.oneSe].penalty]).toEqual([0.1, 1]);
  });
});

describe("acrossFolds", () => {
  test("plain mean, sample SD over sqrt(folds)", () => {
    const s = acrossFolds([0.4, 0.5, 0.9]);
    expect(s.mean).toBeCloseTo(0.6, 12);
    expect(s.standardError).toBeCloseTo(Math.sqrt(((0.2 ** 2 + 0.1 ** 2 + 0.3 ** 2) / 2) / 3), 12);
  });
  test("a fold without a value makes the summary NaN, not hidden", () => {
    expect(Number.isNaN(acrossFolds([0.4, NaN]).mean)).toBe(true);
  });
});
