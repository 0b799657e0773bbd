/**
 * Privacy: Oddsmith must never send workbook data anywhere. These checks scan OUR code, both the
 * TypeScript sources (src/) and the built bundles (dist/*.js), for every browser facility that can
 * open a connection or run text as code, and check the Content-Security-Policy of our pages and of
 * the development server.
 *
 * Excluded on purpose: dist/office-js/ holds Microsoft's office.js (a third-party file copied from
 * @microsoft/office-js). It talks to its Office host through the host's own channel; we serve it from
 * our origin so the policy below (script-src 'self') covers it, but we do not scan or vouch for its
 * contents. Everything else in dist/ is ours (with the open-source libraries bundled into it).
 *
 * When dist/ is missing or older than the sources, the test builds it first (webpack, development
 * mode), so the bundle checks always run on a current build and can never pass vacuously.
 */
import fs from "fs";
import path from "path";
import { BUILD_TIMEOUT_MS, DIST, ensureBuild, ROOT } from "../browser/ensureBuild";
import { startTags } from "../support/htmlTags";

const SRC = path.join(ROOT, "src");

function walk(dir: string, keep: (file: string) => boolean): string[] {
  const out: string[] = [];
  for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
    const full = path.join(dir, entry.name);
    if (entry.isDirectory()) out.push(...walk(full, keep));
    else if (keep(full)) out.push(full);
  }
  return out;
}

/** Our bundles: every .js directly in dist/ (office-js/ is a sub-folder and is not included). */
function ourBundles(): string[] {
  return fs.existsSync(DIST) ? fs.readdirSync(DIST).filter((f) => f.endsWith(".js")).map((f) => path.join(DIST, f)) : [];
}

/**
 * Remove comments from JavaScript/TypeScript text (block and line comments outside strings), so
 * a JSDoc that cites a web page or says "fetch" is not mistaken for code.
 */
function stripComments(code: string): string {
  let out = "";
  let i = 0;
  let quote: string | null = null;
  while (i < code.length) {
    const c = code[i];
    if (quote) {
      out += c;
      if (c === "\\") {
        out += code[i + 1] ?? "";
        i += 2;
        continue;
      }
      if (c === quote) quote = null;
      i++;
      continue;
    }
    if (c === '"' || c === "'" || c === "`") {
      quote = c;
      out += c;
      i++;
      continue;
    }
    if (c === "/" && code[i + 1] === "*") {
      const end = code.indexOf("*/", i + 2);
      i = end < 0 ? code.length : end + 2;
      continue;
    }
    if (c === "/" && code[i + 1] === "/") {
      const end = code.indexOf("\n", i);
      i = end < 0 ? code.length : end;
      continue;
    }
    out += c;
    i++;
  }
  return out;
}

/** Facilities that open connections or evaluate text as code. */
const FORBIDDEN: [string, RegExp][] = [
  ["fetch()", /\bfetch\s*\(/],
  ["XMLHttpRequest", /\bXMLHttpRequest\b/],
  ["WebSocket", /\bWebSocket\b/],
  ["navigator.sendBeacon", /\bsendBeacon\b/],
  ["EventSource", /\bEventSource\b/],
  ["eval()", /(^|[^.\w$])eval\s*\(/],
  ["new Function", /\bnew\s+Function\s*\(/],
  ["importScripts", /\bimportScripts\s*\(/],
  ["remote script URL", /(src\s*=\s*|import\s*\(\s*|Worker\s*\(\s*|importScripts\s*\(\s*)["'`]\s*(https?:)?\/\//i],
  ["string timer (eval in disguise)", /\bset(Timeout|Interval)\s*\(\s*["'`]/],
];

function findings(text: string): string[] {
  return FORBIDDEN.filter(([, re]) => re.test(text)).map(([name]) => name);
}

/** Parse a policy text into directive -> sources. */
function parsePolicy(policy: string): Map<string, string[]> {
  const map = new Map<string, string[]>();
  for (const part of policy.split(";")) {
    const [name, ...sources] = part.trim().split(/\s+/);
    if (name) map.set(name.toLowerCase(), sources);
  }
  return map;
}

/** The page's Content-Security-Policy meta tag, read with the HTML attribute rules (quoted or not). */
function metaPolicy(html: string): string | null {
  const meta = startTags(html).find((t) => t.name === "meta" && (t.attributes.get("http-equiv") ?? "").toLowerCase() === "content-security-policy");
  return meta?.attributes.get("content") ?? null;
}

/** The src of every script tag, and whether any script tag has no src (an inline script). */
function scriptSources(html: string): { sources: string[]; inline: boolean } {
  const scripts = startTags(html).filter((t) => t.name === "script");
  return { sources: scripts.filter((t) => t.attributes.has("src")).map((t) => t.attributes.get("src") as string), inline: scripts.some((t) => !t.attributes.has("src")) };
}

/** The checks every policy of ours must pass. */
function expectClosedPolicy(policy: string, where: string): void {
  const p = parsePolicy(policy);
  const at = (d: string) => [where, d, p.get(d)];
  expect(at("default-src")).toEqual([where, "default-src", ["'self'"]]);
  expect(at("connect-src")).toEqual([where, "connect-src", ["'self'"]]);
  // 'wasm-unsafe-eval' allows compiling WebAssembly (our bundled kernels) and nothing else: no
  // JavaScript eval, which 'unsafe-eval' would allow (CSP Level 3, W3C, the script-src keywords).
  expect(at("script-src")).toEqual([where, "script-src", ["'self'", "'wasm-unsafe-eval'"]]);
  expect(at("object-src")).toEqual([where, "object-src", ["'none'"]]);
  for (const [directive, sources] of p) {
    expect([where, directive, sources.includes("'unsafe-eval'") || sources.includes("'unsafe-inline'")]).toEqual([where, directive, false]);
  }
  // No remote host anywhere in the policy: every source is a keyword or data: (images only).
  for (const [directive, sources] of p) {
    for (const s of sources) expect([where, directive, /^'[a-z-]+'$|^data:$/.test(s)]).toEqual([where, directive, true]);
  }
}

describe("privacy: no connections and no evaluated code in our sources", () => {
  const files = walk(SRC, (f) => /\.(ts|js|mjs|cjs)$/.test(f));

  test("the scan covers the pane, the functions, the engine and the workbench", () => {
    const rel = files.map((f) => path.relative(ROOT, f));
    for (const must of ["src/taskpane/paneController.ts", "src/functions/registry.ts", "src/engine/model/index.ts", "src/preview/preview.ts"]) {
      expect(rel).toContain(must);
    }
  });

  test.each(walk(SRC, (f) => /\.(ts|js|mjs|cjs)$/.test(f)).map((f) => [path.relative(ROOT, f), f]))(
    "%s uses no network or eval facility",
    (_, file) => {
      expect(findings(stripComments(fs.readFileSync(file, "utf8")))).toEqual([]);
    },
  );

  test("the scanner itself finds each forbidden facility (it is not a check that cannot fail)", () => {
    const samples = [
      'fetch("/x")',
      "new XMLHttpRequest()",
      "new WebSocket(u)",
      "navigator.sendBeacon(u, d)",
      "new EventSource(u)",
      "eval(s)",
      "new Function('return 1')",
      "importScripts('a.js')",
      's.src = "https://cdn.example/x.js"',
      'setTimeout("run()", 1)',
    ];
    expect(samples.map((s) => findings(s).length)).toEqual(samples.map(() => 1));
    expect(findings(stripComments("// fetch(u) in a comment\n/* eval(x) */ const a = 1;"))).toEqual([]);
    expect(findings("retrieval(x); obj.evaluate(y)")).toEqual([]);
  });
});

describe("privacy: the page reader follows the HTML attribute rules", () => {
  test("quoted, single-quoted, unquoted (minified) and boolean attributes; comments skipped", () => {
    const minified = `<!-- <script src=https://x.example/a.js> --><meta http-equiv=Content-Security-Policy content="default-src 'self'"><script defer src=functions.js></script><script>inline()</script>`;
    expect(metaPolicy(minified)).toBe("default-src 'self'");
    expect(scriptSources(minified)).toEqual({ sources: ["functions.js"], inline: true });
    expect(scriptSources(`<script src='a.js' async></script><SCRIPT SRC="b.js"></SCRIPT>`)).toEqual({ sources: ["a.js", "b.js"], inline: false });
  });
});

describe("privacy: built bundles and pages", () => {
  beforeAll(() => ensureBuild(), BUILD_TIMEOUT_MS);

  test("dist holds our four bundles (office.js in dist/office-js is third-party and excluded)", () => {
    const names = ourBundles().map((f) => path.basename(f)).sort();
    expect(names).toEqual(expect.arrayContaining(["fitworker.js", "functions.js", "preview.js", "taskpane.js"]));
    expect(names.some((n) => n.includes("office"))).toBe(false);
  });

  test("no bundle of ours uses a network or eval facility", () => {
    for (const file of ourBundles()) {
      // Bundles keep library comments in development builds: strip them like the sources.
      expect([path.basename(file), findings(stripComments(fs.readFileSync(file, "utf8")))]).toEqual([path.basename(file), []]);
    }
  });

  test.each(["taskpane.html", "preview.html"])("%s carries a closed Content-Security-Policy", (page) => {
    const html = fs.readFileSync(path.join(DIST, page), "utf8");
    const policy = metaPolicy(html);
    expect(policy).not.toBeNull();
    expectClosedPolicy(policy!, page);
    expect(parsePolicy(policy!).get("style-src")).toEqual(["'self'"]);
  });

  test("every script a page loads comes from our own folder", () => {
    for (const page of ["taskpane.html", "preview.html"]) {
      const html = fs.readFileSync(path.join(DIST, page), "utf8");
      const { sources, inline } = scriptSources(html);
      expect(sources.length).toBeGreaterThan(0);
      for (const s of sources) expect([page, s, /^(https?:)?\/\//i.test(s)]).toEqual([page, s, false]);
      expect([page, inline]).toEqual([page, false]); // no inline scripts
    }
  });

  test("the shared-runtime page (functions and pane) loads office.js from our folder, first", () => {
    const html = fs.readFileSync(path.join(DIST, "taskpane.html"), "utf8");
    const { sources } = scriptSources(html);
    expect(sources[0]).toBe("office-js/office.js");
    expect(sources).toEqual(expect.arrayContaining(["functions.js", "taskpane.js"]));
  });

  // The production build (npm run build) writes minified pages: attributes unquoted, boolean
  // attributes bare, no closing slashes (<script defer src=functions.js>). The checks above read the
  // development pages; here the same checks read them as the production build writes them. These
  // html-minifier-terser options (the minifier html-webpack-plugin uses) turn the development pages
  // into the production pages byte for byte: checked against `webpack --mode production` output on
  // 2026-12-05 (taskpane.html 644 and preview.html 870 characters, both identical).
  const PRODUCTION_MINIFY = {
    collapseWhitespace: true,
    collapseBooleanAttributes: true,
    removeAttributeQuotes: true,
    removeComments: true,
    removeRedundantAttributes: true,
    removeScriptTypeAttributes: true,
    removeStyleLinkTypeAttributes: true,
    useShortDoctype: true,
  };
  async function productionPage(page: string): Promise<string> {
    // The minifier html-webpack-plugin itself loads (a dependency of it, not of ours).
    const from = path.dirname(require.resolve("html-webpack-plugin"));
    // eslint-disable-next-line @typescript-eslint/no-require-imports
    const { minify } = require(require.resolve("html-minifier-terser", { paths: [from] }));
    return minify(fs.readFileSync(path.join(DIST, page), "utf8"), PRODUCTION_MINIFY);
  }

  test.each(["taskpane.html", "preview.html"])("%s as the production build minifies it: the same closed policy and own scripts", async (page) => {
    const original = fs.readFileSync(path.join(DIST, page), "utf8");
    const html = await productionPage(page);
    expect(html.length).toBeLessThan(original.length); // the minifier did rewrite the page
    expect(html).not.toContain("\n"); // whitespace collapsed
    expect(html).toMatch(/<script defer src=[^"' >]+>/); // unquoted, bare boolean: the production form
    const policy = metaPolicy(html);
    expect(policy).not.toBeNull();
    expectClosedPolicy(policy!, `${page} (production)`);
    expect(metaPolicy(html)).toBe(metaPolicy(original));
    const scripts = scriptSources(html);
    expect(scripts).toEqual(scriptSources(original));
    expect(scripts.inline).toBe(false);
    for (const src of scripts.sources) expect([page, src, /^(https?:)?\/\//i.test(src)]).toEqual([page, src, false]);
  });

  test("the development server sends the same closed policy with every page", async () => {
    // eslint-disable-next-line @typescript-eslint/no-require-imports
    const { createStaticServer, listen, CONTENT_SECURITY_POLICY } = require("../../scripts/static-server.cjs");
    expectClosedPolicy(CONTENT_SECURITY_POLICY, "static server");
    const server = createStaticServer({ root: DIST });
    const port = await listen(server, 0, "127.0.0.1");
    try {
      const http = await import("http");
      const header = await new Promise<string | undefined>((resolve, reject) => {
        http.get(`http://127.0.0.1:${port}/help.html`, { agent: false }, (res) => {
          res.resume();
          resolve(res.headers["content-security-policy"] as string | undefined);
        }).on("error", reject);
      });
      expect(header).toBe(CONTENT_SECURITY_POLICY);
    } finally {
      server.closeAllConnections();
      server.close();
    }
  });
});
