/**
 * What the browser tests share: a current build of dist/ (built here when missing or older than the
 * sources), the static server over plain HTTP on 127.0.0.1 with the pages' security headers, and
 * Debian's Chromium driven by playwright-core with a fresh profile and no background traffic.
 */
import fs from "fs";
import os from "os";
import path from "path";
import type { AddressInfo } from "net";
import type { Server } from "http";
import { chromium, type BrowserContext } from "playwright-core";

import { BUILD_TIMEOUT_MS, DIST, ROOT, ensureBuild } from "./ensureBuild";

export { BUILD_TIMEOUT_MS, ensureBuild } from "./ensureBuild";
export const ARTIFACTS = path.join(ROOT, "test-artifacts");
/** Where CI and this machine have Chromium (Debian package). */
export const CHROMIUM = process.env.CHROMIUM_PATH || "/usr/bin/chromium";

export const CHROMIUM_FLAGS = [
  "--headless",
  "--no-sandbox",
  "--disable-gpu",
  "--disable-quic",
  "--no-first-run",
  "--disable-background-networking",
  "--disable-component-update",
  "--disable-sync",
];

export async function startServer(): Promise<{ server: Server; base: string }> {
  // eslint-disable-next-line @typescript-eslint/no-require-imports
  const { createStaticServer, listen } = require("../../scripts/static-server.cjs");
  const server: Server = createStaticServer({ root: DIST });
  await listen(server, 0, "127.0.0.1");
  const port = (server.address() as AddressInfo).port;
  return { server, base: `http://127.0.0.1:${port}` };
}

export async function launch(): Promise<{ context: BrowserContext; profile: string }> {
  const profile = fs.mkdtempSync(path.join(os.tmpdir(), "oddsmith-chromium-"));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    args: CHROMIUM_FLAGS,
    viewport: { width: 1360, height: 900 },
  });
  return { context, profile };
}

export function saveArtifact(name: string, data: Buffer): string {
  fs.mkdirSync(ARTIFACTS, { recursive: true });
  const file = path.join(ARTIFACTS, name);
  fs.writeFileSync(file, data);
  return file;
}

/**
 * The per-file set-up of a browser suite: a current build, the static server and a fresh Chromium
 * profile before the tests, all closed and removed after them. Read `base` and `context` inside tests.
 */
export function useBrowser(): { readonly base: string; readonly context: BrowserContext } {
  let server: Server | undefined;
  let profile: string | undefined;
  const state = { base: "", context: undefined as unknown as BrowserContext };
  beforeAll(async () => {
    ensureBuild();
    const started = await startServer();
    server = started.server;
    state.base = started.base;
    const launched = await launch();
    state.context = launched.context;
    profile = launched.profile;
  }, BUILD_TIMEOUT_MS);
  afterAll(async () => {
    await state.context?.close();
    server?.closeAllConnections();
    server?.close();
    if (profile) fs.rmSync(profile, { recursive: true, force: true });
  });
  return state;
}
