#!/usr/bin/env node
/**
 * Writes src/preview/demoWorkbook.json: the invented data of the preview workbench.
 *
 * Scenario (invented): a community orchard packs apples in crates; after cold storage some crates are
 * held back for hand sorting. Each row is one crate: the orchard block it came from, days in cold
 * store, flesh firmness (newtons), sugar (degrees Brix), bruises counted on a 20-apple sample, whether
 * the crate was held back for sorting (yes/no), and the grade it was finally sold as (juice, market,
 * premium). The "held" chance rises for very soft AND for very hard fruit (a U-shape in firmness, so
 * basis columns visibly bend the decision boundary), with bruises and storage time.
 *
 * Seeded (mulberry32, seed below): running this again gives the same file. Usage:
 *   node scripts/make-demo-workbook.mjs
 */
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";

const SEED = 20261201;
const ROWS = 240;

function mulberry32(seed) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
const rand = mulberry32(SEED);
/** Standard normal by Box-Muller. */
function normal() {
  const u = 1 - rand();
  const v = rand();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}
function poisson(lambda) {
  const l = Math.exp(-lambda);
  let k = 0;
  let p = 1;
  do {
    k++;
    p *= rand();
  } while (p > l);
  return k - 1;
}
const round = (x, d) => Math.round(x * 10 ** d) / 10 ** d;
const sigmoid = (x) => 1 / (1 + Math.exp(-x));

const blocks = ["Hilltop", "River bend", "Old wall"];
const blockEffect = { Hilltop: -0.3, "River bend": 0.5, "Old wall": 0 };
const header = ["crate", "block", "days_stored", "firmness", "brix", "bruises", "held", "grade"];
const rows = [header];
for (let i = 1; i <= ROWS; i++) {
  const block = blocks[Math.floor(rand() * blocks.length)];
  const days = Math.floor(rand() * 61);
  const firmness = round(66 - 0.18 * days + 9 * normal(), 1);
  const brix = round(13 + (block === "Hilltop" ? 0.8 : 0) + 0.012 * days + 1.1 * normal(), 1);
  const bruises = poisson(1.2 + (block === "River bend" ? 0.8 : 0));
  const eta = -2.1 + 0.012 * (firmness - 62) ** 2 + 0.4 * bruises + 0.025 * days - 0.25 * (brix - 13) + blockEffect[block];
  const held = rand() < sigmoid(eta) ? "yes" : "no";
  // Grade: softmax over juice / market / premium from sugar, bruises and firmness.
  const scores = [0, 0.9 * (brix - 12.5) - 0.5 * bruises + 0.05 * (firmness - 60), 1.6 * (brix - 13.5) - 1.1 * bruises + 0.08 * (firmness - 60) - 0.4];
  const m = Math.max(...scores);
  const w = scores.map((s) => Math.exp(s - m));
  const total = w.reduce((a, b) => a + b, 0);
  let u = rand() * total;
  let g = 0;
  while (g < 2 && u > w[g]) u -= w[g++];
  const grade = ["juice", "market", "premium"][g];
  rows.push([`C-${String(i).padStart(3, "0")}`, block, days, firmness, brix, bruises, held, grade]);
}

// The validate-and-decide sheet: formulas over the crates (no data of its own). Fitted-row checks
// first, labelled as in-sample; the out-of-fold and threshold steps follow as the functions exist.
const LABELS = "Crates!$G$1:$G$241";
const PREDICTORS = "Crates!$C$1:$F$241";
const check = [
  ["Check and decide: is the held-back model good enough, and where to put its threshold?", null, null, null],
  ["Fitted probability", null, "Step", "Result"],
  [`=ODDS.PROB(${LABELS}, ${PREDICTORS})`, null, "1. Ranking on the fitted rows (in-sample: flatters the model)", `=ODDS.AUC(${LABELS}, A3:A243, "positive=yes")`],
];
const checkRows = Array.from({ length: 46 }, (_, i) => check[i] ?? [null, null, null, null]);
const put = (row, step, formula) => {
  checkRows[row - 1] = [checkRows[row - 1][0], null, step, formula];
};
put(6, "2. Counts at the threshold 0.5 on the fitted rows", `=ODDS.CONFUSION(${LABELS}, A3:A243, "positive=yes; threshold=0.5")`);
put(21, "3. Calibration by deciles on the fitted rows", `=ODDS.CALIBRATION(${LABELS}, A3:A243, "positive=yes")`);
put(46, "A model finds associations in this data, not causes. Judge it on rows it was not fitted on, compare groups, and let a qualified person decide about people.", null);

const out = {
  provenance: {
    tool: "scripts/make-demo-workbook.mjs (Node.js, mulberry32 generator)",
    seed: SEED,
    command: "node scripts/make-demo-workbook.mjs",
    note: "Invented data for the preview workbench; not measurements of any real orchard.",
  },
  sheets: [
    {
      name: "Crates",
      top: 1,
      left: 1,
      values: rows,
    },
    {
      name: "Check",
      top: 1,
      left: 1,
      values: checkRows,
    },
  ],
};
const here = path.dirname(fileURLToPath(import.meta.url));
const file = path.resolve(here, "../src/preview/demoWorkbook.json");
// One crate per line keeps the file readable and its diffs small.
// Every innermost array (a row of cells) on one line.
const text = JSON.stringify(out, null, 2).replace(/\[\n\s+(?:null|-?[\d.]+|"(?:[^"\\]|\\.)*")(?:,\n\s+(?:null|-?[\d.]+|"(?:[^"\\]|\\.)*"))*\n\s+\]/g, (m) => JSON.stringify(JSON.parse(m)));
fs.writeFileSync(file, text + "\n");
const heldCount = rows.slice(1).filter((r) => r[6] === "yes").length;
process.stdout.write(`Wrote ${file}: ${ROWS} crates, ${heldCount} held back.\n`);
