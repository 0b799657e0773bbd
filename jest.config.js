/**
 * Three projects: fast unit tests (engine, functions, pane logic), spreadsheet tests (exported
 * formulas recalculated by LibreOffice headless) and browser tests (headless Chromium).
 */
const tsJest = ["ts-jest", { tsconfig: "tsconfig.json" }];
module.exports = {
  projects: [
    {
      displayName: "unit",
      testEnvironment: "node",
      testMatch: ["<rootDir>/test/unit/**/*.test.ts"],
      transform: { "^.+\\.tsx?$": tsJest },
      moduleNameMapper: { "^office-addin-manifest$": "<rootDir>/test/support/office-addin-manifest-stub.js" },
    },
    {
      displayName: "spreadsheet",
      testEnvironment: "node",
      testMatch: ["<rootDir>/test/spreadsheet/**/*.test.ts"],
      transform: { "^.+\\.tsx?$": tsJest },
    },
    {
      displayName: "browser",
      testEnvironment: "node",
      testMatch: ["<rootDir>/test/browser/**/*.test.ts"],
      transform: { "^.+\\.tsx?$": tsJest },
    },
  ],
};
