/** The version written into model descriptions follows package.json. */
import * as fs from "fs";
import * as path from "path";
import { ADDIN_VERSION } from "../../src/shared/addinVersion";

test("ADDIN_VERSION is package.json's version", () => {
  const pkg = JSON.parse(fs.readFileSync(path.resolve(__dirname, "../../package.json"), "utf8"));
  expect(ADDIN_VERSION).toBe(pkg.version);
});
