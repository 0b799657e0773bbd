/**
 * Writes docs/errors.md, the user-facing list of every message Oddsmith can show, from the message
 * catalogues (the engine's src/engine/messages.ts, then the surface's under src/shared/messages/).
 * Run with `npm run docs:errors`; a unit test fails when the committed file differs from what this
 * script would write.
 */
import { writeFileSync } from "fs";
import { join } from "path";
import { MESSAGES } from "../src/shared/messages";

/** Where the table is written, relative to the repository root. */
export const ERROR_TABLE_PATH = join("docs", "errors.md");

/** Escape a cell for a Markdown table: pipes would end the cell, newlines the row. */
function cell(text: string): string {
  return text.replace(/\\/g, "\\\\").replace(/\|/g, "\\|").replace(/\r?\n/g, " ");
}

/** The complete text of docs/errors.md, in catalogue order. */
export function renderErrorTable(): string {
  const lines = [
    "# Oddsmith messages",
    "",
    "Every problem Oddsmith reports, generated from the message catalogues (`src/engine/messages.ts` for",
    "the engine, `src/shared/messages/` for the cell functions and the task pane) by",
    "`npm run docs:errors` (do not edit by hand). A cell function that cannot return a result shows the",
    "cell error with the message; warnings and notes appear in the diagnostics of a result.",
    "`{name}` marks a value filled in when the message is shown.",
    "",
    "| Code | Cell error | Title | Message template |",
    "|---|---|---|---|",
  ];
  for (const [code, entry] of Object.entries(MESSAGES)) {
    lines.push(`| \`${code}\` | ${entry.cellError} | ${cell(entry.title)} | ${cell(entry.template)} |`);
  }
  return lines.join("\n") + "\n";
}

if (require.main === module) {
  const target = join(__dirname, "..", ERROR_TABLE_PATH);
  writeFileSync(target, renderErrorTable(), "utf8");
  process.stdout.write(`wrote ${target} (${Object.keys(MESSAGES).length} messages)\n`);
}
