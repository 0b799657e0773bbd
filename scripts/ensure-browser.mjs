#!/usr/bin/env node
// The browser tests drive Debian's chromium (a test tool's own browser download cannot work offline).
// Before the tests run, make sure /usr/bin/chromium exists: install it with apt-get when we are root,
// otherwise say exactly what to run. Exits non-zero only when chromium is missing and cannot be installed.
import { existsSync } from "node:fs";
import { spawnSync } from "node:child_process";

const CHROMIUM = process.env.ODDSMITH_CHROMIUM || "/usr/bin/chromium";
if (existsSync(CHROMIUM)) process.exit(0);

const isRoot = typeof process.getuid === "function" && process.getuid() === 0;
if (!isRoot) {
  console.error(
    `Browser tests need Debian's chromium at ${CHROMIUM}. Install it with:\n` +
      "  sudo apt-get update && sudo apt-get install -y chromium\n" +
      "or point ODDSMITH_CHROMIUM at another Chromium binary.",
  );
  process.exit(1);
}
console.log("Installing Debian's chromium for the browser tests (apt-get)...");
const env = { ...process.env, DEBIAN_FRONTEND: "noninteractive" };
for (const args of [["update", "-qq"], ["install", "-y", "-qq", "chromium"]]) {
  const r = spawnSync("apt-get", args, { stdio: "inherit", env });
  if (r.status !== 0) {
    console.error(`apt-get ${args.join(" ")} failed (exit ${r.status}). Install chromium by hand and rerun.`);
    process.exit(1);
  }
}
if (!existsSync(CHROMIUM)) {
  console.error(`apt-get finished but ${CHROMIUM} is still missing.`);
  process.exit(1);
}
