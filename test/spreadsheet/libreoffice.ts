/**
 * LibreOffice as the outside spreadsheet engine of the export tests: find `soffice`, and recalculate
 * a workbook headless by converting it, each run with its own throw-away user profile (so parallel
 * runs never share a profile lock) set to recalculate every formula when a file is loaded.
 *
 * Policy (one line each):
 * - soffice is ODDSMITH_SOFFICE, else /usr/bin/soffice (Debian's libreoffice-calc-nogui, installed by
 *   scripts/ensure-test-tools.mjs before `npm test`).
 * - Missing soffice: in CI (env CI set) the test fails loudly; elsewhere it is skipped with a
 *   message naming the command that installs it.
 * - The profile's OOXMLRecalcMode and ODFRecalcMode are 0 ("always recalculate"); the tests also
 *   write stale cached values and check that none survives, so a load without recalculation fails.
 * Reference: LibreOffice help, "Command line parameters" (--headless, --convert-to, --outdir,
 * -env:UserInstallation); the settings are officecfg's org.openoffice.Office.Calc/Formula/Load.
 */
import { execFileSync, spawnSync } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { basename, join } from "node:path";
import { pathToFileURL } from "node:url";

export const SOFFICE = process.env.ODDSMITH_SOFFICE || "/usr/bin/soffice";

/** How to get soffice, for the skip and failure messages. */
export const INSTALL_HINT = "sudo apt-get install -y libreoffice-calc-nogui (or set ODDSMITH_SOFFICE)";

/** True when LibreOffice can be run. */
export function sofficeAvailable(): boolean {
  return existsSync(SOFFICE);
}

/** The LibreOffice version line, e.g. "LibreOffice 7.4.7.2 40(Build:2)". */
export function sofficeVersion(): string {
  return execFileSync(SOFFICE, ["--version"], { encoding: "utf8", timeout: 60_000 }).trim();
}

const RECALC_ALWAYS = `<?xml version="1.0" encoding="UTF-8"?>
<oor:items xmlns:oor="http://openoffice.org/2001/registry" xmlns:xs="http://www.w3.org/2001/XMLSchema" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance">
<item oor:path="/org.openoffice.Office.Calc/Formula/Load"><prop oor:name="OOXMLRecalcMode" oor:op="fuse"><value>0</value></prop></item>
<item oor:path="/org.openoffice.Office.Calc/Formula/Load"><prop oor:name="ODFRecalcMode" oor:op="fuse"><value>0</value></prop></item>
</oor:items>
`;

/** A fresh user profile that recalculates on load. */
function freshProfile(root: string): string {
  const profile = join(root, "profile");
  mkdirSync(join(profile, "user"), { recursive: true });
  writeFileSync(join(profile, "user", "registrymodifications.xcu"), RECALC_ALWAYS);
  return profile;
}

/**
 * Open `input` in LibreOffice headless, recalculate it and save it as `format` ("xlsx" or "ods") in
 * `outDir`; returns the converted file's path. The throw-away profile is removed afterwards.
 * @throws Error with LibreOffice's output when the conversion fails or writes nothing
 */
export function recalculate(input: string, outDir: string, format: "xlsx" | "ods" = "xlsx"): string {
  const root = mkdtempSync(join(tmpdir(), "oddsmith-lo-"));
  try {
    const profile = freshProfile(root);
    const r = spawnSync(
      SOFFICE,
      [`-env:UserInstallation=${pathToFileURL(profile).href}`, "--headless", "--norestore", "--nologo", "--convert-to", format, "--outdir", outDir, input],
      { encoding: "utf8", timeout: 120_000 },
    );
    const converted = join(outDir, basename(input).replace(/\.[^.]+$/, `.${format}`));
    if (r.status !== 0 || !existsSync(converted) || converted === input) {
      throw new Error(`LibreOffice did not convert ${input} (exit ${r.status}${r.error ? `, ${r.error.message}` : ""}):\n${r.stdout}\n${r.stderr}`);
    }
    return converted;
  } finally {
    rmSync(root, { recursive: true, force: true });
  }
}
