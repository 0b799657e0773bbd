import { scoreRows, trainModel } from "../../../src/engine/model";
import type { CellValue } from "../../../src/engine/types";
import { describeBlock, pickColumns } from "../../../src/taskpane/dataTable";
import { checkChoice, DEFAULT_CHOICE, optionsText, predictorsArgument, resultsLayout, type SetupChoice } from "../../../src/taskpane/modelSetup";
import { axisCandidates, buildPlot, columnDomain, contourToData, gridPredictors, gridValue, niceTicks, type DerivedColumns } from "../../../src/taskpane/plotGeometry";

/** Rows of a small table: id, group (text), a, b, label; header on sheet row 3 from column B. */
function table() {
  const values: CellValue[][] = [["id", "group", "a", "b", "label"]];
  // Labels overlap on purpose (a noisy rule, fixed LCG noise) so the fit has finite estimates.
  let s = 12345;
  const noise = () => ((s = (Math.imul(s, 1103515245) + 12345) >>> 0) / 2 ** 32) * 8 - 4;
  for (let i = 0; i < 30; i++) {
    const a = (i * 7) % 11;
    const b = (i * 5) % 13;
    values.push([`r${i}`, i % 3 === 0 ? "north" : "south", a, b, a + 0.5 * b + noise() > 8 ? "pass" : "fail"]);
  }
  return describeBlock({ sheet: "Lots", address: "B3:F33", top: 3, left: 2, values });
}

function choice(patch: Partial<SetupChoice> = {}): SetupChoice {
  return { ...DEFAULT_CHOICE, label: 4, predictors: [2, 3], ...patch };
}

describe("data table", () => {
  test("columns carry kinds and typical values (mean, most frequent)", () => {
    const d = table();
    expect(d.columns.map((c) => c.kind)).toEqual(["text", "text", "number", "number", "text"]);
    expect(d.columns[1].typical).toBe("south");
    expect(d.columns[1].typicalRule).toBe("most frequent");
    expect(d.columns[2].typical).toBeCloseTo(Array.from(d.table.columns[2].values as Float64Array).reduce((s, v) => s + v, 0) / 30, 12);
    expect(d.columns[0].allDistinct).toBe(true);
    expect(d.firstSheetRow).toBe(4);
  });

  test("pickColumns returns the chosen columns with the header row", () => {
    const block = pickColumns(table(), [4, 2]);
    expect(block[0]).toEqual(["label", "a"]);
    expect(block).toHaveLength(31);
  });
});

describe("model set-up", () => {
  test("options text names the positive class for two classes and the reference for several", () => {
    expect(optionsText(choice({ focusClass: "pass", penalty: 0.25, firth: true }), 2)).toBe(
      "positive=pass; penalty=0.25; level=0.95; threshold=0.5; firth=true",
    );
    expect(optionsText(choice({ focusClass: "b" }), 3)).toBe("reference=b; penalty=0; level=0.95");
  });

  test("side-by-side predictors are one range; scattered ones use CHOOSECOLS over the table", () => {
    const d = table();
    expect(predictorsArgument(d, [2, 3])).toBe("Lots!$D$3:$E$33");
    expect(predictorsArgument(d, [1, 3])).toBe("CHOOSECOLS(Lots!$B$3:$F$33, 2, 4)");
  });

  test("the results layout puts per-row outputs on the header row, then FIT and REPORT to the right", () => {
    const layout = resultsLayout(table(), choice(), 2, "Oddsmith results");
    expect(layout.anchors.map((a) => `${a.what}@${a.at}`)).toEqual(["probabilities@A3", "classes@B3", "margins@C3", "coefficients@E3", "report@Q3"]);
    expect(layout.anchors[3].formula).toBe('=ODDS.FIT(Lots!$F$3:$F$33, Lots!$D$3:$E$33, "penalty=0; level=0.95; threshold=0.5")');
    const three = resultsLayout(table(), choice(), 3, "R");
    expect(three.anchors.map((a) => `${a.what}@${a.at}`)).toEqual(["probabilities@A3", "classes@D3", "coefficients@F3", "report@R3"]);
  });

  test("class names with quotes are doubled inside the formula text", () => {
    const layout = resultsLayout(table(), choice({ focusClass: 'say "yes"' }), 2, "R");
    expect(layout.anchors[0].formula).toContain('"positive=say ""yes""; penalty=0');
  });

  test.each([
    [{ predictors: [] }, 'The option predictors cannot be "none". Tick at least one predictor column.'],
    [{ predictors: [2, 4] }, 'The option predictors cannot be "label". The label column cannot also be a predictor: untick it.'],
    [{ penalty: -1 }, 'The option penalty cannot be "-1". Use 0 (no penalty) or a positive number.'],
    [{ level: 1 }, 'The option level cannot be "1". Use a confidence level between 0 and 1, such as 0.95.'],
    [{ threshold: 0 }, 'The option threshold cannot be "0". Use a probability strictly between 0 and 1, such as 0.5.'],
  ])("a bad choice %j gets its message", (patch, message) => {
    expect(() => checkChoice(table(), choice(patch))).toThrow(message);
  });
});

describe("plot geometry", () => {
  test("grid values run x fastest over padded data ranges with the ends included", () => {
    const d = table();
    const xd = columnDomain(d, 2);
    expect(xd[0]).toBeLessThan(0);
    expect(xd[1]).toBeGreaterThan(10);
    expect(gridValue(xd, 0, 5)).toBe(xd[0]);
    expect(gridValue(xd, 4, 5)).toBeCloseTo(xd[1], 12);
    const { cells, heldAt } = gridPredictors(d, choice({ predictors: [1, 2, 3] }), 2, 3, [0, 1], [10, 20], 3, 2, []);
    expect(cells[0]).toEqual(["group", "a", "b"]);
    expect(cells.slice(1).map((r) => [r[1], r[2]])).toEqual([
      [0, 10],
      [0.5, 10],
      [1, 10],
      [0, 20],
      [0.5, 20],
      [1, 20],
    ]);
    expect(cells.slice(1).every((r) => r[0] === "south")).toBe(true);
    expect(heldAt).toEqual([{ name: "group", value: "south", rule: "most frequent" }]);
  });

  test("a contour coordinate maps to the data value of the grid cell it passes through", () => {
    // Marching squares puts value i at coordinate i + 0.5: coordinate 0.5 is the first grid value.
    expect(contourToData(0.5, [10, 20], 11)).toBe(10);
    expect(contourToData(10.5, [10, 20], 11)).toBeCloseTo(20, 12);
    expect(contourToData(0, [10, 20], 11)).toBeCloseTo(9.5, 12);
  });

  test("generated columns are recomputed from the grid's values of their sources", () => {
    const d = describeBlock({
      sheet: "S",
      address: "A1:D4",
      top: 1,
      left: 1,
      values: [["x", "y", "x^2", "label"], [1, 2, 1, "a"], [2, 1, 4, "b"], [3, 3, 9, "a"]],
    });
    const square: DerivedColumns = { outputs: ["x^2"], sources: ["x"], compute: (rows) => rows.map((r, i) => (i === 0 ? ["x^2"] : [(r[0] as number) ** 2])) };
    const c = { ...DEFAULT_CHOICE, label: 3, predictors: [2, 1] };
    expect(axisCandidates(d, c, [square])).toEqual([0, 1]);
    const { cells } = gridPredictors(d, c, 0, 1, [0, 2], [0, 1], 3, 2, [square]);
    expect(cells.slice(1).map((r) => r[0])).toEqual([0, 1, 4, 0, 1, 4]);
  });

  test("the binary field is the positive-class probability of the model at each grid point", () => {
    const d = table();
    const ch = choice();
    const model = trainModel(pickColumns(d, [4]), pickColumns(d, [2, 3]), {});
    expect(model.fit.converged).toBe(true);
    const scores = scoreRows(model, null);
    const plot = buildPlot(d, ch, scores, { threshold: 0.5, band: 0.1, undecided: true }, 2, 3, [], (cells) => scoreRows(model, cells, { headers: "yes" }), 6);
    expect(plot.kind).toBe("binary");
    expect(plot.level).toBe(0.5);
    const k = 2 + 6 * 3; // grid point (i=2, j=3)
    const direct = scoreRows(model, [["a", "b"], [gridValue(plot.xDomain, 2, 6), gridValue(plot.yDomain, 3, 6)]], { headers: "yes" });
    expect(plot.fields[0][k]).toBeCloseTo(direct.prediction.probabilities[1][0], 12);
    expect(plot.points).toHaveLength(30);
    expect(plot.points.filter((p) => p.borderline).length).toBeGreaterThan(0);
  });

  test("several classes give one field per class that is positive exactly where the class leads", () => {
    const values: CellValue[][] = [["a", "b", "k"]];
    for (let i = 0; i < 45; i++) values.push([i % 9, (i * 4) % 7, ["x", "y", "z"][(i + (i % 9 > 5 ? 1 : 0) + ((i * 4) % 7 > 4 ? 1 : 0)) % 3]]);
    const d = describeBlock({ sheet: "S", address: "A1:C46", top: 1, left: 1, values });
    const ch = { ...DEFAULT_CHOICE, label: 2, predictors: [0, 1] };
    const model = trainModel(pickColumns(d, [2]), pickColumns(d, [0, 1]), {});
    expect(model.fit.diagnostics.filter((x) => x.severity === "error")).toEqual([]);
    const scores = scoreRows(model, null);
    const plot = buildPlot(d, ch, scores, { threshold: 0.5, band: 0.1, undecided: true }, 0, 1, [], (cells) => scoreRows(model, cells, { headers: "yes" }), 5);
    expect(plot.kind).toBe("multiclass");
    expect(plot.fields).toHaveLength(3);
    for (let i = 0; i < 25; i++) {
      const leaders = plot.fields.filter((f) => f[i] > 0).length;
      expect(leaders).toBe(1);
    }
  });

  test("tick marks fall on round numbers inside the range", () => {
    expect(niceTicks(0, 10)).toEqual([0, 2, 4, 6, 8, 10]);
    expect(niceTicks(38.2, 91.7)).toEqual([40, 60, 80]);
    expect(niceTicks(0.013, 0.061)).toEqual([0.02, 0.03, 0.04, 0.05, 0.06]);
    expect(niceTicks(5, 5)).toEqual([5]);
  });
});
