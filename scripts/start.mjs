#!/usr/bin/env node
/**
 * `npm start`: build the add-in, prepare development certificates, serve dist/ on
 * https://localhost:3000 and say how to open the preview workbench and how to sideload the add-in.
 *
 * Works on a fresh Linux machine with no Excel and no network:
 * - The build runs webpack locally (no downloads).
 * - Certificates: office-addin-dev-certs generates a local CA and a localhost certificate offline
 *   into ~/.office-addin-dev-certs. Trusting the CA needs administrator rights (sudo on Linux); the
 *   attempt runs in a separate session with no terminal and a time limit, so it can never wait for a
 *   password. When it fails we serve with the generated files anyway and print what to do.
 * - Never reads stdin, so it does not hang without a TTY. Stop it with Ctrl+C (or SIGTERM).
 *
 * Flags: --no-build (serve the existing dist/), --no-trust (skip the CA trust attempt),
 *        --port=N (default 3000, or the PORT environment variable), --once (start, print, then exit
 *        after checking that the server answers: used by CI to check the script itself).
 */
import { spawn, spawnSync } from "node:child_process";
import { X509Certificate } from "node:crypto";
import fs from "node:fs";
import https from "node:https";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { createRequire } from "node:module";

const require = createRequire(import.meta.url);
const { createStaticServer, listen } = require("./static-server.cjs");

const here = path.dirname(fileURLToPath(import.meta.url));
const projectRoot = path.resolve(here, "..");
const dist = path.join(projectRoot, "dist");
const args = new Set(process.argv.slice(2));
const portArg = [...args].find((a) => a.startsWith("--port="));
const port = Number(portArg ? portArg.slice("--port=".length) : process.env.PORT || 3000);
const certDir = path.join(os.homedir(), ".office-addin-dev-certs");
const files = {
  ca: path.join(certDir, "ca.crt"),
  cert: path.join(certDir, "localhost.crt"),
  key: path.join(certDir, "localhost.key"),
};
/** How long the CA trust attempt may take before we give up on it. */
const TRUST_TIMEOUT_MS = 20_000;

function say(text = "") {
  process.stdout.write(text + "\n");
}

function fail(text) {
  process.stderr.write(`\nnpm start stopped: ${text}\n`);
  process.exit(1);
}

// ---- 1. build -------------------------------------------------------------------------------------
function build() {
  if (args.has("--no-build")) {
    if (!fs.existsSync(path.join(dist, "taskpane.html"))) fail("--no-build was given but dist/ holds no build. Run without --no-build.");
    say("Using the existing build in dist/ (--no-build).");
    return;
  }
  say("Building the add-in (webpack, development mode)...");
  const webpackCli = require.resolve("webpack-cli/bin/cli.js");
  const result = spawnSync(process.execPath, [webpackCli, "--mode", "development"], {
    cwd: projectRoot,
    stdio: ["ignore", "inherit", "inherit"],
  });
  if (result.status !== 0) fail("the webpack build failed (see the messages above). Fix the error and run npm start again.");
}

// ---- 2. certificates ------------------------------------------------------------------------------
function certificatesUsable() {
  try {
    const cert = new X509Certificate(fs.readFileSync(files.cert));
    fs.readFileSync(files.key);
    // Renew a day early so a session does not run into the expiry.
    return Date.parse(cert.validTo) - Date.now() > 24 * 3600 * 1000;
  } catch {
    return false;
  }
}

async function prepareCertificates() {
  const devCerts = require("office-addin-dev-certs");
  if (certificatesUsable()) {
    say(`Development certificates found in ${certDir}.`);
  } else {
    say("Generating development certificates (offline)...");
    await devCerts.generateCertificates(files.ca, files.cert, files.key);
    say(`Certificates written to ${certDir}.`);
  }
  return { key: fs.readFileSync(files.key), cert: fs.readFileSync(files.cert) };
}

/**
 * Try to make the system trust our development CA. Runs in its own session (detached: no
 * controlling terminal, stdin closed) with a time limit, so sudo fails instead of waiting.
 * @returns {Promise<{ trusted: boolean, detail: string }>}
 */
function tryTrustCa() {
  if (args.has("--no-trust")) return Promise.resolve({ trusted: false, detail: "skipped (--no-trust)" });
  const script = `
    const certs = require(${JSON.stringify(require.resolve("office-addin-dev-certs"))});
    certs.installCaCertificate(${JSON.stringify(files.ca)})
      .then(() => process.exit(0), (e) => { process.stderr.write(String(e && e.message || e)); process.exit(2); });
  `;
  return new Promise((resolve) => {
    const child = spawn(process.execPath, ["-e", script], { detached: true, stdio: ["ignore", "pipe", "pipe"] });
    let err = "";
    child.stderr.on("data", (d) => (err += d));
    child.stdout.on("data", () => undefined);
    const timer = setTimeout(() => {
      try {
        process.kill(-child.pid, "SIGKILL");
      } catch {
        child.kill("SIGKILL");
      }
      resolve({ trusted: false, detail: `no answer within ${TRUST_TIMEOUT_MS / 1000} s` });
    }, TRUST_TIMEOUT_MS);
    child.on("exit", (code) => {
      clearTimeout(timer);
      const firstLine = err.trim().split("\n").filter(Boolean).slice(-1)[0] || `exit code ${code}`;
      resolve({ trusted: code === 0, detail: code === 0 ? "trusted" : firstLine });
    });
    child.on("error", (e) => {
      clearTimeout(timer);
      resolve({ trusted: false, detail: e.message });
    });
  });
}

function printTrustHelp(detail) {
  say("");
  say("The development CA is NOT trusted by this system (" + detail + ").");
  say("The server still runs with the generated certificate; a browser will warn until you trust the CA:");
  say(`  CA file: ${files.ca}`);
  say("  Linux (Debian/Ubuntu), as an administrator:");
  say(`    sudo cp "${files.ca}" /usr/local/share/ca-certificates/oddsmith-dev-ca.crt && sudo update-ca-certificates`);
  say("  Chromium/Chrome on Linux keep their own store: Settings > Privacy and security > Security >");
  say("    Manage certificates > Authorities > Import, choose the CA file, tick 'Trust for websites'.");
  say("  Firefox: Settings > Privacy & Security > Certificates > View Certificates > Authorities > Import.");
  say("  Windows: double-click the CA file > Install Certificate > Current User >");
  say("    'Trusted Root Certification Authorities'.  macOS: open it in Keychain Access, set 'Always Trust'.");
  say("  Or open the address once and accept the browser's warning (enough for the preview, not for Excel).");
}

// ---- 3. serve -------------------------------------------------------------------------------------
function printAddresses(base) {
  say("");
  say("Oddsmith is being served from dist/ at " + base + "/");
  say("");
  say("Preview workbench (no Excel needed): " + base + "/preview.html");
  say("Task pane page (inside Excel):        " + base + "/taskpane.html");
  say("");
  say("Sideload into Excel (manifest/manifest.xml points at https://localhost:3000/):");
  if (port !== 3000) say(`  Note: this server uses port ${port}; Excel will look on port 3000 unless you edit the manifest.`);
  say("  Excel on the web: open a workbook > Home > Add-ins > More Add-ins (or Get Add-ins) >");
  say("    My Add-ins > Upload My Add-in > choose manifest/manifest.xml > Upload.");
  say("  Excel on Windows: put manifest/manifest.xml in a shared network folder, add that folder under");
  say("    File > Options > Trust Center > Trust Center Settings > Trusted Add-in Catalogs (tick");
  say("    'Show in Menu'), restart Excel, then Home > Add-ins > More Add-ins > Shared Folder.");
  say("  Excel on Mac: copy manifest/manifest.xml to");
  say("    ~/Library/Containers/com.microsoft.Excel/Data/Documents/wef/ and restart Excel.");
  say("  The pane opens from Data > Oddsmith > Classifier; the cell functions start with =ODDS.");
  say("  Excel needs the development CA trusted (see above) to load https://localhost.");
  say("");
  say("Stop with Ctrl+C.");
}

async function main() {
  build();
  const tls = await prepareCertificates();
  const trust = await tryTrustCa();
  if (trust.trusted) say("The development CA is trusted.");
  else printTrustHelp(trust.detail);

  const server = createStaticServer({ root: dist, tls });
  try {
    await listen(server, port, "localhost");
  } catch (e) {
    if (e && e.code === "EADDRINUSE") fail(`port ${port} is in use. Stop the other server, or run: npm start -- --port=3001 (the manifest expects 3000).`);
    fail(`could not listen on port ${port}: ${e && e.message}`);
  }
  const base = `https://localhost:${port}`;
  printAddresses(base);

  if (args.has("--once")) {
    // Check that the server answers, trusting only our own CA for this one request.
    const ok = await new Promise((resolve) => {
      https
        .get(`${base}/preview.html`, { ca: fs.readFileSync(files.ca) }, (res) => {
          res.resume();
          resolve(res.statusCode === 200);
        })
        .on("error", () => resolve(false));
    });
    say(ok ? "Checked: the preview page answers." : "Check failed: the preview page did not answer.");
    server.close();
    process.exit(ok ? 0 : 1);
  }
  const stop = () => {
    say("\nStopping the server.");
    server.close(() => process.exit(0));
    setTimeout(() => process.exit(0), 2000).unref();
  };
  process.on("SIGINT", stop);
  process.on("SIGTERM", stop);
}

main().catch((e) => fail(e && e.message ? e.message : String(e)));
