import { fitBinaryModel } from "../../../src/engine/binary";
import { certifyDirection, univariateSeparation } from "../../../src/engine/separation";
import { design, loadFixture } from "./binaryHelpers";

const ref = loadFixture("glm-references.json");
const en = ref.endometrial.data as { NV: number; PI: number; EH: number; HG: number }[];
const enX = design({ NV: en.map((r) => r.NV), PI: en.map((r) => r.PI), EH: en.map((r) => r.EH) });
const enY = Float64Array.from(en.map((r) => r.HG));
const ungrouped = (y: number[]) => ({ rows: y.length, successes: Float64Array.from(y), trials: new Float64Array(y.length).fill(1) });

describe("univariate separation check", () => {
  test("finds complete separation by one column with a strict threshold", () => {
    const u = univariateSeparation(Float64Array.of(1, 2, 3, 4), ungrouped([0, 0, 1, 1]))!;
    expect(u.complete).toBe(true);
    expect(u.direction).toBe(1);
    expect(u.threshold).toBe(2.5);
    expect(u.rows).toEqual([0, 1, 2, 3]);
  });
  test("finds quasi-complete separation when the classes touch at the threshold", () => {
    const u = univariateSeparation(Float64Array.of(0, 0, 1, 1, 0), ungrouped([0, 1, 1, 1, 0]))!;
    expect(u.complete).toBe(false);
    expect(u.rows).toEqual([2, 3]);
  });
  test("finds separation in the decreasing direction", () => {
    const u = univariateSeparation(Float64Array.of(5, 4, 1, 0), ungrouped([0, 0, 1, 1]))!;
    expect(u.direction).toBe(-1);
  });
  test("does not flag overlapping classes or a constant column", () => {
    expect(univariateSeparation(Float64Array.of(1, 2, 3, 4), ungrouped([0, 1, 0, 1]))).toBeNull();
    expect(univariateSeparation(Float64Array.of(2, 2, 2, 2), ungrouped([0, 1, 0, 1]))).toBeNull();
  });
  test("a grouped row with both successes and failures can only sit on the threshold", () => {
    const r = { rows: 3, successes: Float64Array.of(0, 2, 5), trials: Float64Array.of(5, 5, 5) };
    expect(univariateSeparation(Float64Array.of(1, 2, 3), r)!.rows).toEqual([0, 2]);
    expect(univariateSeparation(Float64Array.of(1, 4, 3), r)).toBeNull();
  });
});

describe("certifyDirection", () => {
  const cols = [new Float64Array([1, 1, 1, 1]), new Float64Array([-2, -1, 1, 2])];
  test("accepts a separating direction and lists the strictly separated rows", () => {
    const f = certifyDirection(cols, Float64Array.of(0, 1), ungrouped([0, 0, 1, 1]), 0)!;
    expect(f.complete).toBe(true);
    expect(f.columns).toEqual([1]);
  });
  test("rejects a direction that puts any row on the wrong side", () => {
    expect(certifyDirection(cols, Float64Array.of(0, 1), ungrouped([0, 1, 0, 1]), 0)).toBeNull();
  });
  test("never names the intercept", () => {
    const f = certifyDirection(cols, Float64Array.of(0.5, 1), ungrouped([0, 0, 1, 1]), 0);
    expect(f === null || !f.columns.includes(0)).toBe(true);
  });
});

describe("separation in fitBinaryModel (unpenalized fits)", () => {
  test("endometrial data (Heinze & Schemper 2002): NV quasi-separates HG and is named with its rows", () => {
    // R: glm converges only nominally, with NV's coefficient near 18 and fitted probabilities of 1.
    expect(ref.endometrial.glm.coefficients[1]).toBeGreaterThan(15);
    const fit = fitBinaryModel(enX, enY);
    const d = fit.diagnostics.find((x) => x.code === "SEPARATION_QUASI")!;
    expect(d.severity).toBe("error");
    expect(d.columns).toEqual(["NV"]);
    // The separated rows are exactly those with NV = 1 (all have HG = 1).
    const nvRows = en.map((r, i) => (r.NV === 1 ? i : -1)).filter((i) => i >= 0);
    expect(d.rows).toEqual(nvRows);
    expect(en.filter((r) => r.NV === 1).every((r) => r.HG === 1)).toBe(true);
    expect(d.message).toContain("firth=true");
  });

  test("a separated fit shows no estimates: coefficients, covariance and table numbers are NaN", () => {
    const fit = fitBinaryModel(enX, enY);
    expect(fit.covariance).toBeNull();
    expect(fit.converged).toBe(false);
    for (const r of fit.table) {
      expect(r.estimate).toBeNaN();
      expect(r.standardError).toBeNaN();
      expect(r.p).toBeNaN();
      expect(r.ratio).toBeNaN();
    }
    expect(Array.from(fit.coefficients[0]).every(Number.isNaN)).toBe(true);
    // No separate non-convergence warning: separation is the explanation.
    expect(fit.diagnostics.some((d) => d.code === "NOT_CONVERGED")).toBe(false);
  });

  test("complete separation by one column is SEPARATION_COMPLETE naming the column and all rows", () => {
    const fit = fitBinaryModel(design({ x: [1, 2, 3, 4, 5, 6], z: [0.3, -1, 0.2, 0.5, -0.4, 0.1] }), Float64Array.of(0, 0, 0, 1, 1, 1));
    const d = fit.diagnostics.find((x) => x.code === "SEPARATION_COMPLETE")!;
    expect(d.severity).toBe("error");
    expect(d.columns).toContain("x");
    expect(d.rows).toEqual([0, 1, 2, 3, 4, 5]);
  });

  test("separation by a combination of columns that no single column shows is found from the iterates", () => {
    // y = 1 exactly when x1 + x2 > 0, while each column alone overlaps between the classes.
    const x1 = [2, -1, 0.5, -2, 1, -0.5, 3, -3];
    const x2 = [-1, 2, -1, 1, -2, 1, -2.5, 2.5];
    const y = x1.map((v, i) => (v + x2[i] > 0 ? 1 : 0));
    const X = design({ x1, x2 });
    for (const c of X.columns) expect(univariateSeparation(c, ungrouped(y))).toBeNull();
    const fit = fitBinaryModel(X, Float64Array.from(y));
    const d = fit.diagnostics.find((x) => x.code === "SEPARATION_COMPLETE")!;
    expect(d.columns).toEqual(["x1", "x2"]);
    expect(d.rows).toHaveLength(8);
  });

  test("grouped counts: 0 of 5 at dose 0, 3 of 5 at dose 1, 5 of 5 at dose 2 is quasi-complete separation", () => {
    const fit = fitBinaryModel(design({ dose: [0, 1, 2] }), Float64Array.of(0, 3, 5), { trials: Float64Array.of(5, 5, 5) });
    const d = fit.diagnostics.find((x) => x.code === "SEPARATION_QUASI")!;
    expect(d.columns).toEqual(["dose"]);
    expect(d.rows).toEqual([0, 2]);
    // One more failure at dose 2 removes it: the estimate exists.
    const ok = fitBinaryModel(design({ dose: [0, 1, 2] }), Float64Array.of(0, 3, 4), { trials: Float64Array.of(5, 5, 5) });
    expect(ok.diagnostics.filter((x) => x.code.startsWith("SEPARATION"))).toEqual([]);
    expect(ok.converged).toBe(true);
  });

  test("overlapping data are not flagged (Spector data has no separation)", () => {
    const sp = loadFixture("spector.json");
    const fit = fitBinaryModel(design({ GPA: sp.data.GPA, TUCE: sp.data.TUCE, PSI: sp.data.PSI }), Float64Array.from(sp.data.GRADE));
    expect(fit.diagnostics.filter((d) => d.code.startsWith("SEPARATION"))).toEqual([]);
  });

  test("a legitimately extreme but overlapping fit is not flagged", () => {
    // Steep but finite: one overlap pair keeps the MLE finite while some |eta| exceed 15.
    const x = [-40, -30, -20, -10, -1, 1, 10, 20, 30, 40];
    const y = [0, 0, 0, 0, 1, 0, 1, 1, 1, 1];
    const fit = fitBinaryModel(design({ x }), Float64Array.from(y));
    expect(fit.converged).toBe(true);
    expect(fit.diagnostics).toEqual([]);
    expect(Number.isFinite(fit.table[1].estimate)).toBe(true);
  });

  test("Firth fits and penalized fits report separation as a note and keep their estimates", () => {
    const fit = fitBinaryModel(enX, enY, { biasReduction: true });
    const d = fit.diagnostics.find((x) => x.code === "SEPARATION_HANDLED")!;
    expect(d.severity).toBe("note");
    expect(d.columns).toEqual(["NV"]);
    expect(Number.isFinite(fit.table[1].estimate)).toBe(true);
  });
});
