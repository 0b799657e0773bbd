/**
 * The task pane page (the shared-runtime page Excel loads) opened outside Office: office.js reports
 * no host, so the page must say where to go instead of failing, and nothing may leave the origin.
 *
 * Observed (and asserted): office.js, a third-party file, tries to open a hidden telemetry frame to
 * a Microsoft host when it runs outside Office; the page's Content-Security-Policy blocks it before
 * any request is made. Our own code causes no policy violation.
 */
import { useBrowser } from "./harness";

jest.setTimeout(90_000);

const browser = useBrowser();

test("outside Office the task pane page explains where to open it, and nothing leaves the origin", async () => {
  const page = await browser.context.newPage();
  const requests: string[] = [];
  const violations: string[] = [];
  const errors: string[] = [];
  page.on("request", (r) => requests.push(r.url()));
  page.on("console", (m) => {
    if (m.type() !== "error") return;
    if (/Content Security Policy/.test(m.text())) violations.push(m.text());
    else errors.push(m.text());
  });
  page.on("pageerror", (e) => errors.push(e.message));
  await page.goto(`${browser.base}/taskpane.html`);
  await page.waitForSelector(".osm-outside");
  expect(await page.textContent(".osm-outside")).toContain("Open it from Excel: Data > Oddsmith > Classifier");
  expect(await page.getAttribute(".osm-outside a", "href")).toBe("preview.html");
  // office.js and both bundles came from our folder.
  const paths = requests.map((u) => (u.startsWith(browser.base) ? u.slice(browser.base.length) : u));
  expect(paths).toEqual(expect.arrayContaining(["/office-js/office.js", "/functions.js", "/taskpane.js"]));
  expect(requests.filter((u) => !u.startsWith(browser.base))).toEqual([]);
  expect(errors).toEqual([]);
  // Every blocked action was office.js's telemetry frame or its inline style for that frame.
  for (const v of violations) expect(v).toMatch(/telemetry|inline style/i);
  await page.close();
});

test("the help page is styled by our style sheet under the same strict policy, with no policy violation", async () => {
  const page = await browser.context.newPage();
  const violations: string[] = [];
  page.on("console", (m) => {
    if (m.type() === "error") violations.push(m.text());
  });
  const response = await page.goto(`${browser.base}/help.html`);
  const header = response!.headers()["content-security-policy"];
  const meta = await page.getAttribute('meta[http-equiv="Content-Security-Policy"]', "content");
  // The page's meta and the server's header are one policy, and it allows no inline style.
  expect(meta).toBe(header);
  expect(header).toMatch(/(^|; )style-src 'self'(;|$)/);
  expect(await page.$$eval("style, [style]", (els) => els.length)).toBe(0);
  // The .osm-help rules of taskpane.css applied: a 52em (15px font) column, centred.
  const look = await page.$eval("body", (b) => ({ maxWidth: getComputedStyle(b).maxWidth, fontSize: getComputedStyle(b).fontSize }));
  expect(look).toEqual({ maxWidth: `${52 * 15}px`, fontSize: "15px" });
  expect(await page.$$eval("h2[id]", (hs) => hs.length)).toBeGreaterThan(5);
  expect(violations).toEqual([]);
  await page.close();
});
