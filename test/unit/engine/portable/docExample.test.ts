/**
 * The worked example of docs/model-description.md is a description this reader accepts, and the
 * probability the page computes by hand for one crate is what the add-in scores.
 */
import { readFileSync } from "fs";
import { join } from "path";
import { scoreRows } from "../../../../src/engine";
import { readDescription } from "../../../../src/engine/portable/readDescription";
import { restoreModel } from "../../../../src/engine/portable/restoreModel";

/** The page prints 16-17 significant digits; the scored number must agree to the last of them. */
const PRINTED_DIGITS = 1e-15;

const page = readFileSync(join(__dirname, "..", "..", "..", "..", "docs", "model-description.md"), "utf8");
const example = /```json\n([\s\S]*?)\n```/.exec(page);

test("the example JSON reads back and scores the crate of weight 130, grade C as the page says", () => {
  expect(example).not.toBeNull();
  const desc = readDescription((example as RegExpExecArray)[1]);
  expect(desc.terms).toEqual(["(intercept)", "weight", "grade=B", "grade=C"]);
  const s = scoreRows(restoreModel(desc), [["weight", "grade"], [130, "C"]]);
  const stated = Number(/P\(yes\) = 1 \/ \(1 \+ exp\(-eta\)\) = ([0-9]+\.[0-9]+)/.exec(page)?.[1]);
  expect(stated).toBeGreaterThan(0);
  expect(Math.abs(s.prediction.probabilities[1][0] - stated)).toBeLessThanOrEqual(PRINTED_DIGITS);
  const eta = Number(/= (0\.6421317418052488)\n/.exec(page)?.[1]);
  expect(Math.abs((s.prediction.linearPredictor as Float64Array)[0] - eta)).toBeLessThanOrEqual(PRINTED_DIGITS);
});
