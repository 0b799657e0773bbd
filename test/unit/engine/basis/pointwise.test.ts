import { applyPointwise, autoShift, fitPointwise, pointwiseName } from "../../../../src/engine/basis/pointwise";

const col = (values: (number | string | null)[], name = "income") => ({ name, values });
const nanAsText = (c: Float64Array) => Array.from(c).map((v) => (Number.isNaN(v) ? "NaN" : v));

describe("pointwise transforms (log, log1p, sqrt, inv)", () => {
  test("names say the function and any shift: log(income), log(income+3), log1p(income), sqrt(income-2), 1/income, 1/(income+1)", () => {
    expect(pointwiseName("log", "income", 0)).toBe("log(income)");
    expect(pointwiseName("log", "income", 3)).toBe("log(income+3)");
    expect(pointwiseName("log1p", "income", 0)).toBe("log1p(income)");
    expect(pointwiseName("sqrt", "income", -2)).toBe("sqrt(income-2)");
    expect(pointwiseName("inv", "income", 0)).toBe("1/income");
    expect(pointwiseName("inv", "income", 1)).toBe("1/(income+1)");
  });

  test("values equal Math.log, Math.log1p, Math.sqrt and 1/x inside the domain", () => {
    const x = [0.5, 2, 10];
    const fns = { log: Math.log, log1p: Math.log1p, sqrt: Math.sqrt, inv: (v: number) => 1 / v } as const;
    for (const fn of ["log", "log1p", "sqrt", "inv"] as const) {
      const s = fitPointwise(col(x), { fn });
      expect(Array.from(applyPointwise(s, col(x)).columns[0])).toEqual(x.map(fns[fn]));
    }
  });

  test("a value outside the domain gives NaN and an OUT_OF_DOMAIN note for that row only, with the fix", () => {
    const s = fitPointwise(col([1, 2, 3]), { fn: "log" });
    const b = applyPointwise(s, col([4, 0, -1]));
    expect(nanAsText(b.columns[0])).toEqual([Math.log(4), "NaN", "NaN"]);
    expect(b.notes.map((n) => [n.row, n.code])).toEqual([[1, "OUT_OF_DOMAIN"], [2, "OUT_OF_DOMAIN"]]);
    expect(b.notes[0].message).toBe('Row 2: log(income) is not defined for 0 in "income". log needs values above 0 (after any shift): set shift=auto or a larger shift.');
  });

  test("sqrt accepts 0; inv refuses exactly 0; log1p refuses -1", () => {
    expect(applyPointwise(fitPointwise(col([1]), { fn: "sqrt" }), col([0])).notes).toHaveLength(0);
    expect(applyPointwise(fitPointwise(col([1]), { fn: "inv" }), col([0])).notes[0].code).toBe("OUT_OF_DOMAIN");
    expect(applyPointwise(fitPointwise(col([1]), { fn: "log1p" }), col([-1])).notes[0].code).toBe("OUT_OF_DOMAIN");
  });

  test("auto shift moves the smallest training value to log(1), log1p(0), sqrt(0) or 1/1, and only when needed", () => {
    expect(autoShift("log", -3, 10)).toBe(4);
    expect(autoShift("log", 0, 10)).toBe(1);
    expect(autoShift("log", 0.5, 10)).toBe(0);
    expect(autoShift("log1p", -2, 10)).toBe(2);
    expect(autoShift("log1p", -0.5, 10)).toBe(0);
    expect(autoShift("sqrt", -2, 5)).toBe(2);
    expect(autoShift("sqrt", 0, 5)).toBe(0);
    expect(autoShift("inv", -2, 5)).toBe(3);
    expect(autoShift("inv", -5, -1)).toBe(0);
  });

  test("the auto shift is stored and reused: a new value below the training minimum can still be out of domain", () => {
    const s = fitPointwise(col([-3, 0, 5]), { fn: "log", shift: "auto" });
    expect(s.shift).toBe(4);
    expect(s.names).toEqual(["log(income+4)"]);
    const b = applyPointwise(s, col([-3, -4, -5]));
    expect(b.columns[0][0]).toBe(0);
    expect(b.notes.map((n) => n.row)).toEqual([1, 2]);
  });

  test("an explicit shift is added before the function", () => {
    const s = fitPointwise(col([0, 1]), { fn: "log", shift: 1 });
    expect(applyPointwise(s, col([0, Math.E - 1])).columns[0][1]).toBeCloseTo(1, 15);
  });
});
