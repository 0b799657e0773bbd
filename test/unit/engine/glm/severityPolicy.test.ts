/**
 * One severity policy for the diagnostics of both fitters: the severity of every fit diagnostic
 * comes from DIAGNOSTIC_SEVERITY in the engine's catalogue (src/engine/messages.ts), so the binary
 * and the multi-class fit report the same problem at the same severity. The two codes the fitters
 * once disagreed on: NOT_CONVERGED (now a warning that keeps the last estimate in both, as R's glm
 * does) and ROWS_SKIPPED (a warning in both). Data: invented.
 */
import { fitBinaryModel } from "../../../../src/engine/binary";
import { DIAGNOSTIC_SEVERITY } from "../../../../src/engine/messages";
import { fitMulticlassModel } from "../../../../src/engine/multiclass";
import type { DesignMatrix, Diagnostic, ModelFit } from "../../../../src/engine/types";

const x = [0.1, 1.9, 0.7, 2.4, 1.1, 0.3, 2.8, 1.6, 0.9, 2.2, 1.4, 0.5, 2.6, 1.2, 0.2, 2.0, NaN, 1.8];
const design: DesignMatrix = { rows: x.length, columns: [Float64Array.from(x)], names: ["x"] };
const binaryY = Float64Array.from([0, 1, 0, 1, 1, 0, 1, 0, 0, 1, 1, 0, 1, 0, 1, 1, 0, 0]);
const classY = Int32Array.from([0, 2, 0, 2, 1, 0, 2, 1, 1, 2, 1, 0, 2, 1, 0, 1, 0, 2]);

function fits(options: { maxIterations?: number }): { name: string; fit: ModelFit }[] {
  return [
    { name: "binary", fit: fitBinaryModel(design, binaryY, options) },
    { name: "multi-class", fit: fitMulticlassModel(design, classY, ["a", "b", "c"], options) },
  ];
}

function find(fit: ModelFit, code: string): Diagnostic {
  const d = fit.diagnostics.find((e) => e.code === code);
  if (!d) throw new Error(`no ${code} among ${fit.diagnostics.map((e) => e.code).join(", ")}`);
  return d;
}

describe("both fitters take the severity of a diagnostic from the catalogue's table", () => {
  test("the table says: NOT_CONVERGED and ROWS_SKIPPED are warnings", () => {
    expect(DIAGNOSTIC_SEVERITY.NOT_CONVERGED).toBe("warning");
    expect(DIAGNOSTIC_SEVERITY.ROWS_SKIPPED).toBe("warning");
  });

  test.each(fits({}))("a row with a missing predictor is a ROWS_SKIPPED warning in the $name fit", ({ fit }) => {
    const d = find(fit, "ROWS_SKIPPED");
    expect(d.severity).toBe(DIAGNOSTIC_SEVERITY.ROWS_SKIPPED);
    expect(d.message).toContain("1");
  });

  test.each(fits({ maxIterations: 1 }))("stopping at the iteration cap is a NOT_CONVERGED warning that keeps the estimate in the $name fit", ({ fit }) => {
    const d = find(fit, "NOT_CONVERGED");
    expect(d.severity).toBe(DIAGNOSTIC_SEVERITY.NOT_CONVERGED);
    expect(fit.converged).toBe(false);
    expect(fit.coefficients.every((b) => Array.from(b).every(Number.isFinite))).toBe(true);
  });

  test("every diagnostic either fitter gives, on ordinary and failing fits, has the table's severity", () => {
    const separated = { rows: 6, columns: [Float64Array.of(0, 1, 2, 3, 4, 5)], names: ["x"] };
    const all = [
      ...fits({}),
      ...fits({ maxIterations: 1 }),
      { name: "binary separated", fit: fitBinaryModel(separated, Float64Array.of(0, 0, 0, 1, 1, 1)) },
      { name: "multi-class separated", fit: fitMulticlassModel(separated, Int32Array.of(0, 0, 1, 1, 2, 2), ["a", "b", "c"]) },
    ];
    const table = DIAGNOSTIC_SEVERITY as Record<string, string>;
    const seen = new Set<string>();
    for (const { name, fit } of all) {
      for (const d of fit.diagnostics) {
        if (!(d.code in table)) continue;
        seen.add(d.code);
        if (d.severity !== table[d.code]) throw new Error(`${name}: ${d.code} is ${d.severity}, the table says ${table[d.code]}`);
      }
    }
    // The check saw the codes it is about, and a failed fit's error.
    for (const code of ["ROWS_SKIPPED", "NOT_CONVERGED", "SEPARATION_COMPLETE", "CLASSES_SEPARATED"]) expect(seen).toContain(code);
  });
});
