/**
 * Make sure dist/ holds a build at least as new as every source file, building it (webpack,
 * development mode) when not. Used by the browser tests and the privacy test, which jest may run at
 * the same time: a lock directory makes one build while the other waits, then re-checks.
 */
import { spawnSync } from "child_process";
import fs from "fs";
import path from "path";

export const ROOT = path.resolve(__dirname, "../..");
export const DIST = path.join(ROOT, "dist");
/** A development build takes 20-60 s on a shared 2-core machine. */
export const BUILD_TIMEOUT_MS = 240_000;
const LOCK = path.join(ROOT, "build", ".dist-build-lock");
/** Files every check needs in dist/. */
const OUTPUTS = ["preview.html", "taskpane.html", "preview.js", "taskpane.js", "fitworker.js", "functions.js"];

function files(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? files(path.join(dir, e.name)) : [path.join(dir, e.name)]));
}

/** True when every output exists and is newer than every input. */
export function buildIsCurrent(): boolean {
  // The help page is rendered at build time from docs/functions.md by scripts/help-page.js.
  const inputs = [
    ...files(path.join(ROOT, "src")),
    path.join(ROOT, "webpack.config.js"),
    path.join(ROOT, "scripts", "help-page.js"),
    path.join(ROOT, "docs", "functions.md"),
  ];
  const newest = Math.max(...inputs.map((f) => fs.statSync(f).mtimeMs));
  return OUTPUTS.map((f) => path.join(DIST, f)).every((f) => fs.existsSync(f) && fs.statSync(f).mtimeMs >= newest);
}

function sleep(ms: number): void {
  Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);
}

export function ensureBuild(): void {
  if (buildIsCurrent()) return;
  fs.mkdirSync(path.dirname(LOCK), { recursive: true });
  const deadline = Date.now() + BUILD_TIMEOUT_MS;
  for (;;) {
    try {
      fs.mkdirSync(LOCK);
      break;
    } catch {
      // Another test process is building: wait for it, then use its build if current.
      // A lock older than the build timeout is left over from a killed run: take it over.
      const lock = fs.statSync(LOCK, { throwIfNoEntry: false });
      if (lock && Date.now() - lock.mtimeMs > BUILD_TIMEOUT_MS) fs.rmSync(LOCK, { recursive: true, force: true });
      if (Date.now() > deadline) throw new Error("Timed out waiting for another test process to build dist/.");
      sleep(500);
      if (!fs.existsSync(LOCK) && buildIsCurrent()) return;
    }
  }
  try {
    if (buildIsCurrent()) return;
    const cli = require.resolve("webpack-cli/bin/cli.js");
    const run = spawnSync(process.execPath, [cli, "--mode", "development"], { cwd: ROOT, encoding: "utf8", timeout: BUILD_TIMEOUT_MS });
    if (run.status !== 0) throw new Error(`webpack build failed:\n${run.stdout}\n${run.stderr}`);
  } finally {
    fs.rmSync(LOCK, { recursive: true, force: true });
  }
}
