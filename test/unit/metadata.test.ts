/**
 * functions.json as Excel will read it: generated from src/functions/functions.ts with
 * custom-functions-metadata's programmatic API (the library CustomFunctionsMetadataPlugin runs in the
 * webpack build; about 1 s here, against ~10 s for a full build). Checks every function against the
 * registry (names, parameters, optional flags), the id rules of the custom-functions documentation,
 * the help links, and that each declared function calls the adapter registered under its name.
 */
import * as fs from "fs";
import * as path from "path";
import { generateCustomFunctionsMetadata } from "custom-functions-metadata";
import * as functions from "../../src/functions/functions";
import { CellFunctionFailure } from "../../src/functions/cellError";
import { CELL_FUNCTIONS, evaluateCellFunction } from "../../src/functions/registry";
import { formatMessage } from "../../src/shared/messages";

const ROOT = path.resolve(__dirname, "../..");
// eslint-disable-next-line @typescript-eslint/no-require-imports
const { DEV_URL } = require(path.join(ROOT, "webpack.config.js"));
// eslint-disable-next-line @typescript-eslint/no-require-imports
const { renderHelpPage } = require(path.join(ROOT, "scripts/help-page.js"));

interface ParamMeta {
  name: string;
  description?: string;
  type?: string;
  dimensionality?: string;
  optional?: boolean;
}
interface FunctionMeta {
  id: string;
  name: string;
  description: string;
  helpUrl?: string;
  parameters: ParamMeta[];
  result: { dimensionality?: string };
}

let metadata: { functions: FunctionMeta[] };
let associations: { functionName: string; id: string }[];
let generateMs = 0;

beforeAll(async () => {
  const started = Date.now();
  const result = await generateCustomFunctionsMetadata(path.join(ROOT, "src/functions/functions.ts"), false);
  generateMs = Date.now() - started;
  expect(result.errors).toEqual([]);
  metadata = JSON.parse(result.metadataJson);
  associations = result.associate as { functionName: string; id: string }[];
}, 60_000);

describe("functions.json generated from functions.ts", () => {
  test("is generated without errors, quickly enough to run in the unit tests", () => {
    expect(metadata.functions.length).toBeGreaterThan(0);
    expect(generateMs).toBeLessThan(20_000);
  });

  test("lists exactly the registry's functions, in its order", () => {
    expect(metadata.functions.map((f) => f.id)).toEqual(CELL_FUNCTIONS.map((f) => f.name));
  });

  test("gives every function the registry's parameters with the same optional flags", () => {
    for (const spec of CELL_FUNCTIONS) {
      const meta = metadata.functions.find((f) => f.id === spec.name) as FunctionMeta;
      expect([spec.name, meta.parameters.map((p) => ({ name: p.name, optional: p.optional === true }))]).toEqual([
        spec.name,
        spec.parameters,
      ]);
    }
  });

  test("takes every argument as a range of any values and spills a range", () => {
    for (const f of metadata.functions) {
      expect([f.id, f.result.dimensionality]).toEqual([f.id, "matrix"]);
      for (const p of f.parameters) {
        expect([f.id, p.name, p.dimensionality, p.type]).toEqual([f.id, p.name, "matrix", "any"]);
        expect((p.description ?? "").length).toBeGreaterThan(10);
      }
    }
  });

  test("follows the id rules: letters, digits, _ and . only; upper-case names of 3+ characters; never a cell reference", () => {
    const a1 = /^[A-Z]{1,3}[0-9]+$/;
    const r1c1 = /^R[0-9]*C[0-9]*$/;
    for (const f of metadata.functions) {
      expect(f.id).toMatch(/^[A-Za-z0-9_.]+$/);
      expect(f.name).toBe(f.name.toUpperCase());
      expect(f.name.length).toBeGreaterThanOrEqual(3);
      expect(a1.test(f.name) || r1c1.test(f.name)).toBe(false);
      expect(f.id).toBe(f.name);
    }
    expect(new Set(metadata.functions.map((f) => f.id)).size).toBe(metadata.functions.length);
  });

  test("carries a real description (written before @customfunction, so it is not the id)", () => {
    for (const f of metadata.functions) {
      expect(f.description.length).toBeGreaterThan(40);
      expect(f.description.startsWith(f.id)).toBe(false);
      expect(f.description).not.toContain("@");
    }
  });

  test("links each function to its own section of the help page, which exists", () => {
    const markdown = fs.readFileSync(path.join(ROOT, "docs/functions.md"), "utf8");
    const page: string = renderHelpPage(markdown);
    for (const spec of CELL_FUNCTIONS) {
      const meta = metadata.functions.find((f) => f.id === spec.name) as FunctionMeta;
      expect(meta.helpUrl).toBe(`${DEV_URL}help.html#${spec.help}`);
      expect(markdown).toContain(`{#${spec.help}}`);
      expect(page).toContain(`id="${spec.help}"`);
      expect(markdown).toContain(`ODDS.${spec.name}(`);
    }
  });

  test("associates each id with a function that functions.ts exports", () => {
    expect(associations.map((a) => a.id)).toEqual(CELL_FUNCTIONS.map((f) => f.name));
    for (const a of associations) expect(typeof (functions as Record<string, unknown>)[a.functionName]).toBe("function");
  });

  test("each declared function calls the adapter registered under its name", () => {
    // With every argument omitted, each adapter reports its FIRST required argument as empty; the
    // declared function and the registry entry must agree on that message.
    for (const a of associations) {
      const spec = CELL_FUNCTIONS.find((f) => f.name === a.id);
      if (!spec) throw new Error(`no registry entry for ${a.id}`);
      const declared = (functions as unknown as Record<string, (...args: unknown[]) => unknown>)[a.functionName];
      const expected = formatMessage("EMPTY_RANGE", { argument: spec.parameters[0].name });
      let thrown: unknown;
      try {
        declared(...spec.parameters.map(() => null));
      } catch (e) {
        thrown = e;
      }
      expect([a.id, thrown instanceof CellFunctionFailure && thrown.message]).toEqual([a.id, expected]);
      let viaRegistry: unknown;
      try {
        evaluateCellFunction(`ODDS.${spec.name}`, []);
      } catch (e) {
        viaRegistry = e;
      }
      expect([a.id, viaRegistry instanceof CellFunctionFailure && viaRegistry.message]).toEqual([a.id, expected]);
    }
  });
});

describe("help page rendered from docs/functions.md (scripts/help-page.js)", () => {
  test("renders headings with their anchors, tables, lists and code, escaping HTML", () => {
    const html: string = renderHelpPage(
      ["# Title", "", "## Part {#part}", "", "Text with `a<b` and **bold**.", "", "- one", "- two", "", "| a | b |", "|---|---|", "| 1 | <x> |", "", "```", "=ODDS.FIT(A1:A3, B1:B3)", "```"].join("\n"),
    );
    expect(html).toContain("<title>Title</title>");
    expect(html).toContain('<h2 id="part">Part</h2>');
    expect(html).toContain("<code>a&lt;b</code>");
    expect(html).toContain("<strong>bold</strong>");
    expect(html).toContain("<ul><li>one</li><li>two</li></ul>");
    expect(html).toContain("<td>&lt;x&gt;</td>");
    expect(html).toContain("<pre><code>=ODDS.FIT(A1:A3, B1:B3)</code></pre>");
    expect(html).not.toMatch(/<script|https?:\/\//);
  });
});
