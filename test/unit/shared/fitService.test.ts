/**
 * The fit service shared by the cell functions and the task pane: the same ranges and options text
 * give one fit, whichever side asks first, and whether the pane trained it on its own thread or in its
 * worker. Data: Spector & Mazzeo (1980), test/fixtures/binary/spector.json; the estimates are checked
 * against Stata there (test/unit/engine/binary.test.ts), here only that both sides get the same model.
 */
import * as spector from "../../fixtures/binary/spector.json";
import * as engineModel from "../../../src/engine/model";
import type { CellValue } from "../../../src/engine/types";
import { fitCell } from "../../../src/functions/fitCell";
import { fitForCell, fitForPane, fitKey, modelCache, readModelOptions, shareFit, type FitRequest } from "../../../src/shared/fitService";

const d = spector.data;
const LABELS: CellValue[][] = [["GRADE"], ...d.GRADE.map((g) => [g])];
const PREDICTORS: CellValue[][] = [["GPA", "TUCE", "PSI"], ...d.GPA.map((g, i) => [g, d.TUCE[i], d.PSI[i]])];
/** The options text the pane writes into its formulas (modelSetup.optionsText). */
const OPTIONS_TEXT = "penalty=0; level=0.95; threshold=0.5";

/** What the pane asks the service for (the pane parses the text under its own name). */
function paneRequest(text = OPTIONS_TEXT): FitRequest {
  return { labels: LABELS, predictors: PREDICTORS, options: readModelOptions("the Oddsmith pane", [[text]]) };
}

/** What a fitting cell function asks the service for, over the same ranges. */
function cellRequest(text = OPTIONS_TEXT): FitRequest {
  return { labels: LABELS, predictors: PREDICTORS, options: readModelOptions("ODDS.FIT", [[text]]) };
}

let train: jest.SpyInstance;

beforeEach(() => {
  modelCache().clear();
  train = jest.spyOn(engineModel, "trainModel");
});

afterEach(() => train.mockRestore());

describe("one fit for the pane and the cells, through the fit service", () => {
  test("the pane fits first: the cell gets the pane's model object and trains nothing", () => {
    const pane = fitForPane(paneRequest());
    expect(train).toHaveBeenCalledTimes(1);
    const cell = fitForCell(cellRequest(), 0);
    expect(cell).toBe(pane);
    expect(train).toHaveBeenCalledTimes(1);
  });

  test("a cell fits first: the pane gets the cell's model object and trains nothing", () => {
    const cell = fitForCell(cellRequest(), 0);
    const pane = fitForPane(paneRequest());
    expect(pane).toBe(cell);
    expect(train).toHaveBeenCalledTimes(1);
  });

  test("ODDS.FIT over the pane's ranges shows the pane's estimates without training again", () => {
    const pane = fitForPane(paneRequest());
    const table = fitCell(LABELS, PREDICTORS, [[OPTIONS_TEXT]]);
    expect(train).toHaveBeenCalledTimes(1);
    const estimates = table.slice(1, 1 + pane.fit.terms.length).map((r) => r[2]);
    expect(estimates).toEqual(Array.from(pane.fit.coefficients[0]));
  });

  test("a model the pane's worker trained, handed to the service, is the one the cell gets", () => {
    const request = paneRequest();
    const trainedElsewhere = engineModel.trainModel(request.labels, request.predictors, request.options.model);
    train.mockClear();
    shareFit(request, trainedElsewhere);
    expect(fitForCell(cellRequest(), 0)).toBe(trainedElsewhere);
    expect(train).not.toHaveBeenCalled();
  });

  test("the threshold only changes scoring: the same fit; a fit option changes the key and refits", () => {
    const base = fitForPane(paneRequest());
    expect(fitForCell(cellRequest("penalty=0; level=0.95; threshold=0.3"), 0)).toBe(base);
    expect(fitKey(cellRequest("penalty=0; level=0.95; threshold=0.3"))).toBe(fitKey(paneRequest()));
    const penalized = fitForCell(cellRequest("penalty=0.5; level=0.95; threshold=0.5"), 0);
    expect(penalized).not.toBe(base);
    expect(fitKey(cellRequest("penalty=0.5"))).not.toBe(fitKey(paneRequest()));
    expect(train).toHaveBeenCalledTimes(2);
  });

  test("an edited cell refits for both sides", () => {
    const before = fitForPane(paneRequest());
    const edited = PREDICTORS.map((r) => [...r]);
    edited[5][0] = (edited[5][0] as number) + 0.01;
    const after = fitForCell({ ...cellRequest(), predictors: edited }, 0);
    expect(after).not.toBe(before);
    expect(fitForPane({ ...paneRequest(), predictors: edited })).toBe(after);
    expect(train).toHaveBeenCalledTimes(2);
  });
});
