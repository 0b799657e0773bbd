/**
 * Offline structural checks of manifest/manifest.xml. No package carries the add-in manifest schema
 * and the online validator cannot be reached here, so this test checks what breaks an add-in in
 * practice: well-formed XML, element order of OfficeApp, the shared-runtime wiring (one resid for
 * runtime, functions page, FunctionFile and task pane), every resid defined with the right resource
 * type, URLs that the webpack build really produces, icons that exist with the declared sizes, and the
 * production URL rewrite.
 *
 * Sources: "Configure your Office Add-in to use a shared runtime" and the add-in manifest element
 * reference (Office Add-ins documentation, learn.microsoft.com), read through the search tool;
 * length limits marked "from memory".
 */
import * as fs from "fs";
import * as path from "path";
import { XMLParser, XMLValidator } from "fast-xml-parser";
import { NAMESPACE } from "../../src/functions/namespace";

const ROOT = path.resolve(__dirname, "../..");
const MANIFEST = path.join(ROOT, "manifest/manifest.xml");
const xml = fs.readFileSync(MANIFEST, "utf8");
// eslint-disable-next-line @typescript-eslint/no-require-imports
const webpackConfig = require(path.join(ROOT, "webpack.config.js"));
const DEV_URL: string = webpackConfig.DEV_URL;

type Node = Record<string, unknown>;
const parsed = new XMLParser({ ignoreAttributes: false, attributeNamePrefix: "@", parseAttributeValue: false }).parse(xml) as Node;
const app = parsed.OfficeApp as Node;
const overrides = app.VersionOverrides as Node;
const resources = overrides.Resources as Node;

/** Visit every element (with its tag and attributes) in document order. */
function walk(node: unknown, tag: string, visit: (tag: string, el: Node) => void): void {
  if (Array.isArray(node)) {
    for (const item of node) walk(item, tag, visit);
    return;
  }
  if (node === null || typeof node !== "object") return;
  visit(tag, node as Node);
  for (const [key, child] of Object.entries(node as Node)) if (!key.startsWith("@")) walk(child, key, visit);
}

const asList = <T>(x: T | T[] | undefined): T[] => (x === undefined ? [] : Array.isArray(x) ? x : [x]);

/** Resource id -> value, per resource kind. */
function resourceTable(kind: string, item: string): Map<string, string> {
  const table = new Map<string, string>();
  for (const el of asList((resources[kind] as Node | undefined)?.[item] as Node | Node[])) {
    table.set(String(el["@id"]), String(el["@DefaultValue"]));
  }
  return table;
}
const urls = resourceTable("bt:Urls", "bt:Url");
const images = resourceTable("bt:Images", "bt:Image");
const shortStrings = resourceTable("bt:ShortStrings", "bt:String");
const longStrings = resourceTable("bt:LongStrings", "bt:String");

/** Read the width and height of a PNG file from its IHDR chunk. */
function pngSize(file: string): { width: number; height: number } {
  const data = fs.readFileSync(file);
  expect(data.subarray(0, 8).toString("hex")).toBe("89504e470d0a1a0a");
  return { width: data.readUInt32BE(16), height: data.readUInt32BE(20) };
}

/** The dist/ file a development URL points to, mapped back to the source the build copies it from. */
function sourceOf(url: string): string {
  expect(url.startsWith(DEV_URL)).toBe(true);
  const rel = url.slice(DEV_URL.length);
  if (rel.startsWith("assets/")) return path.join(ROOT, rel);
  return rel;
}

describe("manifest/manifest.xml", () => {
  test("is well-formed XML with a task-pane OfficeApp root", () => {
    expect(XMLValidator.validate(xml)).toBe(true);
    expect(app["@xsi:type"]).toBe("TaskPaneApp");
    expect(app["@xmlns"]).toBe("http://schemas.microsoft.com/office/appforoffice/1.1");
    expect(overrides["@xsi:type"]).toBe("VersionOverridesV1_0");
  });

  test("lists OfficeApp children in the schema's order", () => {
    const order = [
      "Id",
      "Version",
      "ProviderName",
      "DefaultLocale",
      "DisplayName",
      "Description",
      "IconUrl",
      "HighResolutionIconUrl",
      "SupportUrl",
      "Hosts",
      "Requirements",
      "DefaultSettings",
      "Permissions",
      "VersionOverrides",
    ];
    const present = Object.keys(app).filter((k) => !k.startsWith("@"));
    expect(present).toEqual(order);
  });

  test("has a GUID id and a four-part version", () => {
    expect(String(app.Id)).toMatch(/^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/);
    expect(String(app.Version)).toMatch(/^\d+\.\d+\.\d+\.\d+$/);
  });

  test("targets workbooks and requires the shared runtime and custom functions", () => {
    expect((app.Hosts as Node).Host).toEqual({ "@Name": "Workbook" });
    const sets = asList(((app.Requirements as Node).Sets as Node).Set as Node | Node[]);
    expect(sets).toEqual(
      expect.arrayContaining([
        { "@Name": "SharedRuntime", "@MinVersion": "1.1" },
        { "@Name": "CustomFunctionsRuntime", "@MinVersion": "1.1" },
      ]),
    );
  });

  test("asks for ReadWriteDocument (read ranges, write results) and trusts no other domain", () => {
    expect(app.Permissions).toBe("ReadWriteDocument");
    expect(xml).not.toMatch(/<AppDomains/);
    // Only our own origin appears in URLs (namespace URIs aside).
    const found = [...xml.matchAll(/DefaultValue="(https?:\/\/[^"]+)"/g)].map((m) => m[1]);
    expect(found.length).toBeGreaterThan(5);
    for (const u of found) expect(u.startsWith(DEV_URL)).toBe(true);
  });

  test("wires one shared runtime: runtime, functions page, FunctionFile and task pane use the same resid", () => {
    const host = (overrides.Hosts as Node).Host as Node;
    expect(host["@xsi:type"]).toBe("Workbook");
    const runtime = (host.Runtimes as Node).Runtime as Node;
    expect(runtime["@lifetime"]).toBe("long");
    const resid = String(runtime["@resid"]);
    const cf = (host.AllFormFactors as Node).ExtensionPoint as Node;
    expect(cf["@xsi:type"]).toBe("CustomFunctions");
    expect(((cf.Page as Node).SourceLocation as Node)["@resid"]).toBe(resid);
    const desktop = host.DesktopFormFactor as Node;
    expect((desktop.FunctionFile as Node)["@resid"]).toBe(resid);
    const actions: Node[] = [];
    walk(desktop, "DesktopFormFactor", (tag, el) => {
      if (tag === "Action" && el["@xsi:type"] === "ShowTaskpane") actions.push(el);
    });
    expect(actions.length).toBe(1);
    expect((actions[0].SourceLocation as Node)["@resid"]).toBe(resid);
    expect(urls.get(resid)).toBe(`${DEV_URL}taskpane.html`);
    expect(String(((app.DefaultSettings as Node).SourceLocation as Node)["@DefaultValue"])).toBe(urls.get(resid));
  });

  test("points the custom functions at the bundle, metadata and namespace the build produces", () => {
    const cf = (((overrides.Hosts as Node).Host as Node).AllFormFactors as Node).ExtensionPoint as Node;
    const script = urls.get(String(((cf.Script as Node).SourceLocation as Node)["@resid"]));
    const metadata = urls.get(String(((cf.Metadata as Node).SourceLocation as Node)["@resid"]));
    expect(script).toBe(`${DEV_URL}functions.js`);
    expect(metadata).toBe(`${DEV_URL}functions.json`);
    expect(shortStrings.get(String((cf.Namespace as Node)["@resid"]))).toBe(NAMESPACE);
    // The webpack config emits exactly these names.
    const config = webpackConfig({}, { mode: "development" });
    expect(Object.keys(config.entry)).toContain("functions");
    expect(config.output.filename).toBe("[name].js");
    const names = config.plugins.map((p: { constructor: { name: string } }) => p.constructor.name);
    expect(names).toContain("CustomFunctionsMetadataPlugin");
    const metaPlugin = config.plugins.find((p: { constructor: { name: string } }) => p.constructor.name === "CustomFunctionsMetadataPlugin");
    expect(metaPlugin.options.output).toBe("functions.json");
    const pages = config.plugins
      .filter((p: { constructor: { name: string } }) => p.constructor.name === "HtmlWebpackPlugin")
      .map((p: { userOptions: { filename: string; chunks: string[] } }) => p.userOptions);
    const taskpane = pages.find((p: { filename: string }) => p.filename === "taskpane.html");
    expect(taskpane.chunks).toContain("functions");
  });

  test("defines every resid it uses, in the resource table of the right kind", () => {
    const expectedKind: Record<string, Map<string, string>> = {
      SourceLocation: urls,
      FunctionFile: urls,
      Runtime: urls,
      LearnMoreUrl: urls,
      "bt:Image": images,
      Label: shortStrings,
      Title: shortStrings,
      Namespace: shortStrings,
      Description: longStrings,
    };
    const used: string[] = [];
    walk(overrides.Hosts, "Hosts", (tag, el) => {
      if (el["@resid"] === undefined) return;
      const table = expectedKind[tag];
      expect([tag, table !== undefined]).toEqual([tag, true]);
      expect([tag, String(el["@resid"]), table.has(String(el["@resid"]))]).toEqual([tag, String(el["@resid"]), true]);
      used.push(String(el["@resid"]));
    });
    expect(used.length).toBeGreaterThan(15);
    // Every resource is used at least once (no stale entries).
    for (const id of [...urls.keys(), ...images.keys(), ...shortStrings.keys(), ...longStrings.keys()]) {
      expect([id, used.includes(id)]).toEqual([id, true]);
    }
  });

  test("uses ids of letters, digits, dots and underscores, each defined once", () => {
    const ids: string[] = [];
    walk(overrides, "VersionOverrides", (tag, el) => {
      if (el["@id"] !== undefined) ids.push(String(el["@id"]));
    });
    for (const id of ids) expect(id).toMatch(/^[A-Za-z0-9_.]+$/);
    // Resource ids are unique per table; control and group ids are unique overall.
    const controls: string[] = [];
    walk((overrides.Hosts as Node), "Hosts", (tag, el) => {
      if ((tag === "Group" || tag === "Control" || tag === "OfficeTab") && el["@id"] !== undefined) controls.push(String(el["@id"]));
    });
    expect(new Set(controls).size).toBe(controls.length);
    for (const kind of ["bt:Urls", "bt:Images", "bt:ShortStrings", "bt:LongStrings"]) {
      const list = asList(Object.values(resources[kind] as Node)[0] as Node | Node[]).map((e) => String(e["@id"]));
      expect(new Set(list).size).toBe(list.length);
    }
  });

  test("keeps strings within the manifest's length limits (125 short, 250 long; from memory)", () => {
    for (const [id, v] of shortStrings) expect([id, v.length <= 125]).toEqual([id, true]);
    for (const [id, v] of longStrings) expect([id, v.length <= 250]).toEqual([id, true]);
    expect(String((app.DisplayName as Node)["@DefaultValue"]).length).toBeLessThanOrEqual(125);
    expect(String((app.Description as Node)["@DefaultValue"]).length).toBeLessThanOrEqual(250);
  });

  test("references icons that exist in assets/ with the declared pixel sizes", () => {
    const declared: { url: string; size: number }[] = [
      { url: String((app.IconUrl as Node)["@DefaultValue"]), size: 32 },
      { url: String((app.HighResolutionIconUrl as Node)["@DefaultValue"]), size: 64 },
    ];
    walk(overrides.Hosts, "Hosts", (tag, el) => {
      if (tag === "bt:Image") declared.push({ url: String(images.get(String(el["@resid"]))), size: Number(el["@size"]) });
    });
    for (const [id, url] of images) {
      const m = /icon-(\d+)\.png$/.exec(url);
      expect([id, m !== null]).toEqual([id, true]);
    }
    for (const { url, size } of declared) {
      const file = sourceOf(url);
      expect([file, fs.existsSync(file)]).toEqual([file, true]);
      expect(pngSize(file)).toEqual({ width: size, height: size });
    }
  });

  test("points every page URL at a file the build writes", () => {
    const config = webpackConfig({}, { mode: "development" });
    const pages = config.plugins
      .filter((p: { constructor: { name: string } }) => p.constructor.name === "HtmlWebpackPlugin")
      .map((p: { userOptions: { filename: string } }) => p.userOptions.filename);
    const copy = config.plugins.find((p: { constructor: { name: string } }) => p.constructor.name === "CopyPlugin");
    const copiedTo = copy.patterns.map((p: { to: string }) => p.to);
    const produced = new Set<string>(["functions.js", "functions.json", ...pages, ...copiedTo]);
    for (const url of urls.values()) {
      const rel = url.slice(DEV_URL.length);
      expect([rel, produced.has(rel)]).toEqual([rel, true]);
    }
    expect(String((app.SupportUrl as Node)["@DefaultValue"])).toBe(`${DEV_URL}help.html`);
  });

  test("production builds rewrite every development URL to the publisher's URL", () => {
    const config = webpackConfig({}, { mode: "production" });
    const copy = config.plugins.find((p: { constructor: { name: string } }) => p.constructor.name === "CopyPlugin");
    const pattern = copy.patterns.find((p: { to: string }) => p.to === "manifest.xml");
    const out = String(pattern.transform(Buffer.from(xml)));
    expect(out).not.toContain("localhost");
    expect(out.split(webpackConfig.PRODUCTION_URL).length - 1).toBe(xml.split(DEV_URL).length - 1);
    expect(XMLValidator.validate(out)).toBe(true);
    // Development builds leave it alone.
    const devPattern = webpackConfig({}, { mode: "development" }).plugins
      .find((p: { constructor: { name: string } }) => p.constructor.name === "CopyPlugin")
      .patterns.find((p: { to: string }) => p.to === "manifest.xml");
    expect(String(devPattern.transform(Buffer.from(xml)))).toBe(xml);
  });

  test("the placeholder production URL can never resolve until the publisher sets it", () => {
    if (process.env.ODDSMITH_PUBLIC_URL) return; // set by a publisher: nothing to check
    expect(new URL(webpackConfig.PRODUCTION_URL).hostname.endsWith(".invalid")).toBe(true);
    expect(webpackConfig.PRODUCTION_URL.startsWith("https://")).toBe(true);
  });
});
