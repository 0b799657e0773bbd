#!/usr/bin/env node
// The test suite drives two Debian programs: chromium (browser tests; a test tool's own browser
// download cannot work offline) and LibreOffice Calc (test/spreadsheet/: the exported scoring
// formulas recalculated by a real spreadsheet engine). Before the tests run, install what is missing
// with apt-get (non-interactive) when we are root, as in CI.
// - chromium missing and not installable: exit 1 (as before).
// - soffice missing and not installable: exit 1 in CI (env CI set), so the check is never silently
//   skipped there; elsewhere print how to install it and go on (the spreadsheet test then skips with
//   a visible message).
import { existsSync } from "node:fs";
import { spawnSync } from "node:child_process";

const TOOLS = [
  { what: "chromium", path: process.env.ODDSMITH_CHROMIUM || "/usr/bin/chromium", pkg: "chromium", env: "ODDSMITH_CHROMIUM", needed: true },
  {
    what: "LibreOffice Calc",
    path: process.env.ODDSMITH_SOFFICE || "/usr/bin/soffice",
    pkg: "libreoffice-calc-nogui",
    env: "ODDSMITH_SOFFICE",
    needed: Boolean(process.env.CI),
  },
];

const isRoot = typeof process.getuid === "function" && process.getuid() === 0;
const missing = TOOLS.filter((t) => !existsSync(t.path));
if (missing.length === 0) process.exit(0);

/** Say what is missing and how to get it; exit 1 when a needed tool is among them. */
function giveUp(tools, why) {
  for (const t of tools) {
    const level = t.needed ? "ERROR" : "NOTE";
    console.error(
      `${level}: ${t.what} is missing at ${t.path} (${why}). Install it with:\n` +
        `  sudo apt-get update && sudo apt-get install -y ${t.pkg}\n` +
        `or point ${t.env} at another binary.` +
        (t.needed ? "" : `\n  The tests that need it are skipped (in CI they fail instead).`),
    );
  }
  if (tools.some((t) => t.needed)) process.exit(1);
}

if (!isRoot) {
  giveUp(missing, "not root, so apt-get cannot install it");
  process.exit(0);
}

const pkgs = missing.map((t) => t.pkg);
console.log(`Installing Debian's ${pkgs.join(", ")} for the tests (apt-get)...`);
const env = { ...process.env, DEBIAN_FRONTEND: "noninteractive" };
let failed = null;
for (const args of [["update", "-qq"], ["install", "-y", "-qq", ...pkgs]]) {
  const r = spawnSync("apt-get", args, { stdio: "inherit", env });
  if (r.status !== 0) {
    failed = `apt-get ${args.join(" ")} failed (exit ${r.status ?? r.error?.message})`;
    break;
  }
}
const still = missing.filter((t) => !existsSync(t.path));
if (still.length) giveUp(still, failed ?? "apt-get finished but the program is still missing");
