import { readFileSync } from "fs";
import { join } from "path";
import { MESSAGES } from "../../../src/shared/messages";
import { ERROR_TABLE_PATH, renderErrorTable } from "../../../scripts/write-error-table";

describe("docs/errors.md", () => {
  test("equals what scripts/write-error-table.ts writes (run `npm run docs:errors` after editing messages)", () => {
    const committed = readFileSync(join(__dirname, "..", "..", "..", ERROR_TABLE_PATH), "utf8");
    expect(committed).toBe(renderErrorTable());
  });

  test("has one table row per catalogue code, with its cell error", () => {
    const rows = renderErrorTable()
      .split("\n")
      .filter((l) => l.startsWith("| `"));
    expect(rows.length).toBe(Object.keys(MESSAGES).length);
    expect(rows[0]).toBe(
      "| `EMPTY_RANGE` | #VALUE! | Empty range | The {argument} range has no data. Select a range that holds at least one row of values. |",
    );
  });
});
