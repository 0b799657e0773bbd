/**
 * Build of the Oddsmith add-in.
 *
 * Output (dist/):
 *   functions.js     cell functions (namespace ODDS); functions.json is generated from its JSDoc
 *   functions.json   custom-functions metadata (CustomFunctionsMetadataPlugin)
 *   taskpane.html    the ONE page of the shared runtime: it loads office.js, then the functions and
 *                    task-pane bundles (the manifest points the runtime, the functions page, the
 *                    FunctionFile and the task pane at this page)
 *   help.html        per-function help, rendered from docs/functions.md (the @helpurl target)
 *   manifest.xml     the add-in manifest; in production builds its URLs are rewritten (see below)
 *   assets/          icons
 *   office-js/       office.js served from node_modules so the add-in works offline (no CDN)
 *
 * Development: `webpack serve --mode development` serves dist/ on https://localhost:3000 with the
 * certificates in ~/.office-addin-dev-certs when they exist (office-addin-dev-certs writes them there).
 */
/* eslint-env node */
const fs = require("fs");
const os = require("os");
const path = require("path");
const CustomFunctionsMetadataPlugin = require("custom-functions-metadata-plugin");
const HtmlWebpackPlugin = require("html-webpack-plugin");
const CopyWebpackPlugin = require("copy-webpack-plugin");
const { renderHelpPage } = require("./scripts/help-page");

/** Where the development server serves the add-in; manifest/manifest.xml is written with this base. */
const DEV_URL = "https://localhost:3000/";

/**
 * Where the add-in is published. TO BE SET BY THE PUBLISHER: replace this placeholder (or set the
 * ODDSMITH_PUBLIC_URL environment variable when building) with the HTTPS folder that will serve
 * dist/. The ".invalid" top-level domain can never resolve (RFC 2606), so a production build that
 * was not configured fails loudly instead of pointing at somebody else's server.
 */
const PRODUCTION_URL = process.env.ODDSMITH_PUBLIC_URL || "https://oddsmith-host.invalid/";

const PORT = 3000;
const CERT_DIR = path.join(os.homedir(), ".office-addin-dev-certs");

/**
 * The shared-runtime page used while src/taskpane/taskpane.html does not exist. Whatever template
 * replaces it must load office.js (from our own folder) BEFORE the bundles, as this one does.
 */
const FALLBACK_PAGE = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><title>Oddsmith</title>
<script src="office-js/office.js"></script></head><body></body></html>`;

const src = (...parts) => path.resolve(__dirname, "src", ...parts);
const exists = (file) => fs.existsSync(file);

/** Rewrite the development URLs inside a text file for production. */
function toProductionUrls(text) {
  return text.split(DEV_URL).join(PRODUCTION_URL);
}

/**
 * functions.json carries the help URLs of the cell functions (@helpurl in functions.ts); in a
 * production build they are rewritten like the manifest's.
 */
class ProductionUrlsPlugin {
  apply(compiler) {
    compiler.hooks.thisCompilation.tap("ProductionUrlsPlugin", (compilation) => {
      compilation.hooks.processAssets.tap(
        { name: "ProductionUrlsPlugin", stage: compiler.webpack.Compilation.PROCESS_ASSETS_STAGE_OPTIMIZE_INLINE },
        (assets) => {
          if (!assets["functions.json"]) return;
          const text = toProductionUrls(assets["functions.json"].source().toString());
          compilation.updateAsset("functions.json", new compiler.webpack.sources.RawSource(text));
        },
      );
    });
  }
}

/** HTTPS options for the dev server: the generated certificates when present, else webpack's own. */
function httpsOptions() {
  const key = path.join(CERT_DIR, "localhost.key");
  const cert = path.join(CERT_DIR, "localhost.crt");
  const ca = path.join(CERT_DIR, "ca.crt");
  if (exists(key) && exists(cert)) {
    return {
      type: "https",
      options: { key: fs.readFileSync(key), cert: fs.readFileSync(cert), ...(exists(ca) ? { ca: fs.readFileSync(ca) } : {}) },
    };
  }
  return { type: "https" };
}

module.exports = (env, argv) => {
  const dev = argv.mode !== "production";

  // ---- bundles ------------------------------------------------------------------------------------
  const entry = { functions: src("functions", "functions.ts") };
  // The task pane is written in src/taskpane/ (its own owner); it joins the shared-runtime page.
  if (exists(src("taskpane", "taskpane.ts"))) entry.taskpane = src("taskpane", "taskpane.ts");
  // The pane's background fit (a Web Worker script) and the preview workbench (src/preview/).
  if (exists(src("taskpane", "fitWorker.ts"))) entry.fitworker = src("taskpane", "fitWorker.ts");
  // The evaluation section's background cross-validation (a Web Worker script).
  if (exists(src("taskpane", "evaluationWorker.ts"))) entry.evalworker = src("taskpane", "evaluationWorker.ts");
  if (exists(src("preview", "preview.ts"))) entry.preview = src("preview", "preview.ts");

  // ---- pages --------------------------------------------------------------------------------------
  const pages = [
    new HtmlWebpackPlugin({
      filename: "taskpane.html",
      // Until src/taskpane/taskpane.html exists, a minimal page carries office.js and the bundles.
      ...(exists(src("taskpane", "taskpane.html")) ? { template: src("taskpane", "taskpane.html") } : { templateContent: FALLBACK_PAGE }),
      chunks: ["functions", "taskpane"].filter((name) => name in entry),
      chunksSortMode: "manual",
    }),
    // The preview workbench: the pane beside an in-memory workbook (no Excel needed).
    ...(entry.preview
      ? [new HtmlWebpackPlugin({ filename: "preview.html", template: src("preview", "preview.html"), chunks: ["preview"] })]
      : []),
  ];

  // ---- copied files -------------------------------------------------------------------------------
  const copies = [
    { from: "assets/*.png", to: "assets/[name][ext]" },
    // Style sheets of the pane and the workbench (plain files: no CSS loader needed).
    { from: "src/taskpane/taskpane.css", to: "taskpane.css", noErrorOnMissing: true },
    { from: "src/preview/preview.css", to: "preview.css", noErrorOnMissing: true },
    {
      from: "manifest/manifest.xml",
      to: "manifest.xml",
      transform: (content) => (dev ? content : toProductionUrls(content.toString())),
    },
    {
      from: "docs/functions.md",
      to: "help.html",
      transform: (content) => renderHelpPage(content.toString()),
    },
    {
      // office.js loads its host- and locale-specific scripts from its own folder: copy the folder,
      // without the debug builds (half the size). Marked minimized: they already are, and Terser
      // would otherwise spend minutes re-minifying 30 MB in production builds.
      from: "node_modules/@microsoft/office-js/dist",
      to: "office-js",
      globOptions: { ignore: ["**/*.debug.js"] },
      info: { minimized: true },
    },
  ];

  return {
    devtool: dev ? "source-map" : false,
    entry,
    output: { path: path.resolve(__dirname, "dist"), filename: "[name].js", clean: true },
    resolve: { extensions: [".ts", ".js"] },
    module: {
      rules: [
        {
          test: /\.ts$/,
          exclude: /node_modules/,
          use: { loader: "ts-loader", options: { transpileOnly: true } },
        },
      ],
    },
    plugins: [
      new CustomFunctionsMetadataPlugin({ output: "functions.json", input: "./src/functions/functions.ts" }),
      ...pages,
      new CopyWebpackPlugin({ patterns: copies }),
      ...(dev ? [] : [new ProductionUrlsPlugin()]),
    ],
    performance: { hints: false },
    devServer: {
      port: PORT,
      server: httpsOptions(),
      static: { directory: path.resolve(__dirname, "dist") },
    },
  };
};

module.exports.DEV_URL = DEV_URL;
module.exports.PRODUCTION_URL = PRODUCTION_URL;
module.exports.toProductionUrls = toProductionUrls;
