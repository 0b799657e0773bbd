/**
 * Seeded data generator for the speed benchmark (bench/run.ts). Writes into bench/data/ (git-ignored).
 *
 * Every data set is stored in one simple binary layout that both Node and the peer scripts (Python,
 * R) read, so every program fits exactly the same numbers:
 *   <name>.json   metadata: rows, columns, term names, classes, true coefficients, seed, file names
 *   <name>.X.f64  the design matrix WITHOUT intercept, column-major, little-endian float64
 *                 (column j occupies bytes [8*rows*j, 8*rows*(j+1)))
 *   <name>.y.f64  binary sets: the 0/1 response, float64
 *   <name>.cls.i32  multi-class sets: the 0-based class index, little-endian int32
 * The one-hot-heavy set also has <name>.raw.csv: the same rows as the worksheet would hold them
 * (three text columns and five numeric ones), used for the cell-function path.
 *
 * Usage: tsx bench/generate.ts [--quick] [--force]
 * Files are regenerated only when missing or when the generator version / seed changed.
 */
import * as fs from "fs";
import * as path from "path";

export const DATA_DIR = path.join(__dirname, "data");
/** Bump when the generating code changes, so stale files are rewritten. */
const GENERATOR_VERSION = 3;
export const SEED = 20261201;

// ---- seeded random numbers -------------------------------------------------------------------

/**
 * xoshiro128** (Blackman & Vigna, "Scrambled linear pseudorandom number generators", ACM TOMS 2021),
 * seeded through splitmix32. 32-bit state words, so it runs at full speed in plain JavaScript.
 */
export class Rng {
  private s0: number;
  private s1: number;
  private s2: number;
  private s3: number;
  private spare = NaN;

  constructor(seed: number) {
    let x = seed >>> 0;
    const next = (): number => {
      x = (x + 0x9e3779b9) >>> 0;
      let z = x;
      z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
      z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
      return (z ^ (z >>> 16)) >>> 0;
    };
    this.s0 = next();
    this.s1 = next();
    this.s2 = next();
    this.s3 = next();
  }

  private nextU32(): number {
    const result = Math.imul(rotl(Math.imul(this.s1, 5) >>> 0, 7), 9) >>> 0;
    const t = (this.s1 << 9) >>> 0;
    this.s2 ^= this.s0;
    this.s3 ^= this.s1;
    this.s1 ^= this.s2;
    this.s0 ^= this.s3;
    this.s2 ^= t;
    this.s3 = rotl(this.s3 >>> 0, 11);
    this.s0 >>>= 0;
    this.s1 >>>= 0;
    this.s2 >>>= 0;
    return result;
  }

  /** Uniform in (0, 1), 53 random bits, never exactly 0. */
  uniform(): number {
    const hi = this.nextU32() >>> 5; // 27 bits
    const lo = this.nextU32() >>> 6; // 26 bits
    return (hi * 67108864 + lo + 0.5) / 9007199254740992;
  }

  /** Standard normal by the Box-Muller transform (both values used). */
  normal(): number {
    if (!Number.isNaN(this.spare)) {
      const s = this.spare;
      this.spare = NaN;
      return s;
    }
    const u = this.uniform();
    const v = this.uniform();
    const r = Math.sqrt(-2 * Math.log(u));
    this.spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  }
}

function rotl(x: number, k: number): number {
  return ((x << k) | (x >>> (32 - k))) >>> 0;
}

function sigmoid(x: number): number {
  return x >= 0 ? 1 / (1 + Math.exp(-x)) : Math.exp(x) / (1 + Math.exp(x));
}

// ---- data set metadata and IO -----------------------------------------------------------------

export interface DataSetMeta {
  name: string;
  kind: "binary" | "multiclass";
  rows: number;
  /** Number of design columns (intercept excluded). */
  cols: number;
  names: string[];
  /** Class labels; binary: ["0", "1"]. */
  classes: string[];
  /** True coefficients used to simulate the response, intercept first, one vector per non-reference class. */
  trueCoefficients: number[][];
  seed: number;
  generatorVersion: number;
  description: string;
  files: { X: string; y?: string; cls?: string; rawCsv?: string };
}

export interface LoadedDataSet {
  meta: DataSetMeta;
  columns: Float64Array[];
  /** Binary response (0/1), when kind = binary. */
  y?: Float64Array;
  /** Class index, when kind = multiclass. */
  classIndex?: Int32Array;
}

/** Reads a data set written by this generator; columns are views on one buffer (no copy). */
export function loadDataSet(name: string): LoadedDataSet {
  const meta = JSON.parse(fs.readFileSync(path.join(DATA_DIR, `${name}.json`), "utf8")) as DataSetMeta;
  const xBuf = readAligned(path.join(DATA_DIR, meta.files.X));
  const columns: Float64Array[] = [];
  for (let j = 0; j < meta.cols; j++) {
    columns.push(new Float64Array(xBuf, j * meta.rows * 8, meta.rows));
  }
  const out: LoadedDataSet = { meta, columns };
  if (meta.files.y) out.y = new Float64Array(readAligned(path.join(DATA_DIR, meta.files.y)), 0, meta.rows);
  if (meta.files.cls) out.classIndex = new Int32Array(readAligned(path.join(DATA_DIR, meta.files.cls)), 0, meta.rows);
  return out;
}

/** Reads a whole file into a fresh ArrayBuffer (offset 0, so typed-array views are aligned). */
function readAligned(file: string): ArrayBuffer {
  const size = fs.statSync(file).size;
  const ab = new ArrayBuffer(size);
  const fd = fs.openSync(file, "r");
  try {
    let done = 0;
    const view = new Uint8Array(ab);
    while (done < size) {
      const n = fs.readSync(fd, view, done, Math.min(size - done, 1 << 26), done);
      if (n <= 0) throw new Error(`short read on ${file}`);
      done += n;
    }
  } finally {
    fs.closeSync(fd);
  }
  return ab;
}

function writeTyped(file: string, arrays: ArrayBufferView[]): void {
  const fd = fs.openSync(file, "w");
  try {
    for (const a of arrays) {
      fs.writeSync(fd, new Uint8Array(a.buffer, a.byteOffset, a.byteLength));
    }
  } finally {
    fs.closeSync(fd);
  }
}

function isCurrent(name: string): boolean {
  const metaFile = path.join(DATA_DIR, `${name}.json`);
  if (!fs.existsSync(metaFile)) return false;
  try {
    const meta = JSON.parse(fs.readFileSync(metaFile, "utf8")) as DataSetMeta;
    const expected = DATA_SETS.find((d) => d.name === name)?.seed;
    if (meta.generatorVersion !== GENERATOR_VERSION || meta.seed !== expected) return false;
    return Object.values(meta.files).every((f) => f && fs.existsSync(path.join(DATA_DIR, f)));
  } catch {
    return false;
  }
}

function writeMeta(meta: DataSetMeta): void {
  fs.writeFileSync(path.join(DATA_DIR, `${meta.name}.json`), JSON.stringify(meta, null, 1));
}

// ---- the data sets ----------------------------------------------------------------------------

/**
 * True coefficient vector of the binary sets: intercept -0.4, slopes alternate in sign and shrink
 * slowly, scaled so the linear predictor has standard deviation 1.5 with independent N(0,1)
 * columns. That is a moderate signal (AUC about 0.84): far from separation at every size.
 */
export function binaryTrueCoefficients(d: number): number[] {
  const raw: number[] = [];
  for (let j = 0; j < d; j++) raw.push((j % 2 === 0 ? 1 : -1) * (1 - j / (2 * d)));
  const norm = Math.sqrt(raw.reduce((s, b) => s + b * b, 0));
  return [-0.4, ...raw.map((b) => (1.5 * b) / norm)];
}

/** Binary logistic data: rows x d independent N(0,1) columns, y ~ Bernoulli(sigmoid(b0 + x'b)). */
function generateBinary(name: string, rows: number, d: number, seed: number): void {
  const rng = new Rng(seed);
  const beta = binaryTrueCoefficients(d);
  const columns = Array.from({ length: d }, () => new Float64Array(rows));
  const y = new Float64Array(rows);
  for (let i = 0; i < rows; i++) {
    let eta = beta[0];
    for (let j = 0; j < d; j++) {
      const v = rng.normal();
      columns[j][i] = v;
      eta += beta[j + 1] * v;
    }
    y[i] = rng.uniform() < sigmoid(eta) ? 1 : 0;
  }
  const names = Array.from({ length: d }, (_, j) => `x${j + 1}`);
  writeTyped(path.join(DATA_DIR, `${name}.X.f64`), columns);
  writeTyped(path.join(DATA_DIR, `${name}.y.f64`), [y]);
  writeMeta({
    name,
    kind: "binary",
    rows,
    cols: d,
    names,
    classes: ["0", "1"],
    trueCoefficients: [beta],
    seed,
    generatorVersion: GENERATOR_VERSION,
    description: `${rows} rows x ${d} independent N(0,1) columns; y ~ Bernoulli(sigmoid(eta)), sd(eta) = 1.5`,
    files: { X: `${name}.X.f64`, y: `${name}.y.f64` },
  });
}

/**
 * Multi-class softmax data: rows x d independent N(0,1) columns, K classes, class 0 the reference
 * (zero coefficients); each other class has its own seeded coefficient vector with norm 1.
 */
function generateMulticlass(name: string, rows: number, d: number, k: number, seed: number): void {
  const rng = new Rng(seed);
  const coefRng = new Rng(seed ^ 0x5bd1e995);
  const B: number[][] = [];
  for (let c = 1; c < k; c++) {
    const slopes = Array.from({ length: d }, () => coefRng.normal());
    const norm = Math.sqrt(slopes.reduce((s, b) => s + b * b, 0));
    B.push([0.2 * (c - 2), ...slopes.map((b) => b / norm)]);
  }
  const columns = Array.from({ length: d }, () => new Float64Array(rows));
  const cls = new Int32Array(rows);
  const x = new Float64Array(d);
  const eta = new Float64Array(k);
  for (let i = 0; i < rows; i++) {
    for (let j = 0; j < d; j++) {
      x[j] = rng.normal();
      columns[j][i] = x[j];
    }
    let max = 0;
    eta[0] = 0;
    for (let c = 1; c < k; c++) {
      let e = B[c - 1][0];
      for (let j = 0; j < d; j++) e += B[c - 1][j + 1] * x[j];
      eta[c] = e;
      if (e > max) max = e;
    }
    let total = 0;
    for (let c = 0; c < k; c++) {
      eta[c] = Math.exp(eta[c] - max);
      total += eta[c];
    }
    let u = rng.uniform() * total;
    let chosen = k - 1;
    for (let c = 0; c < k; c++) {
      u -= eta[c];
      if (u <= 0) {
        chosen = c;
        break;
      }
    }
    cls[i] = chosen;
  }
  writeTyped(path.join(DATA_DIR, `${name}.X.f64`), columns);
  writeTyped(path.join(DATA_DIR, `${name}.cls.i32`), [cls]);
  writeMeta({
    name,
    kind: "multiclass",
    rows,
    cols: d,
    names: Array.from({ length: d }, (_, j) => `x${j + 1}`),
    classes: Array.from({ length: k }, (_, c) => `class${c}`),
    trueCoefficients: B,
    seed,
    generatorVersion: GENERATOR_VERSION,
    description: `${rows} rows x ${d} N(0,1) columns, ${k} classes, reference class0; slope vectors of norm 1`,
    files: { X: `${name}.X.f64`, cls: `${name}.cls.i32` },
  });
}

/** Level names of the one-hot-heavy set: text columns "region", "product", "channel". */
export const ONE_HOT_TEXT = ["region", "product", "channel"];
export const ONE_HOT_NUMERIC = ["score", "age", "tenure", "load", "wait"];

/**
 * One-hot-heavy binary data: 3 text columns with `levels` levels each (Zipf-like frequencies,
 * P(level i) proportional to 1/(i+1), so the rarest of 50 levels still has about 440 of 100,000
 * rows), plus 5 numeric columns on everyday scales (sd 1, 12, 29, 1, 1). The design drops the
 * first level of each text column (the reference level), giving 3*(levels-1) indicator columns +
 * 5 numeric columns. Indicator columns of rare levels make the Hessian badly conditioned, which
 * is what slows first-order optimizers.
 */
function generateOneHot(name: string, rows: number, levels: number, seed: number): void {
  const rng = new Rng(seed);
  const effRng = new Rng(seed ^ 0x27d4eb2f);
  const weights = Array.from({ length: levels }, (_, i) => 1 / (i + 1));
  const wTotal = weights.reduce((s, w) => s + w, 0);
  const cdf: number[] = [];
  let acc = 0;
  for (const w of weights) {
    acc += w / wTotal;
    cdf.push(acc);
  }
  const effects = ONE_HOT_TEXT.map(() => Array.from({ length: levels }, (_, i) => (i === 0 ? 0 : 0.5 * effRng.normal())));
  const numericBeta = [0.8, 0.02, -0.01, -0.5, 0.3];
  const intercept = -0.3;
  const levelNames = ONE_HOT_TEXT.map((t) => Array.from({ length: levels }, (_, i) => `${t[0].toUpperCase()}${String(i + 1).padStart(2, "0")}`));

  const d = ONE_HOT_TEXT.length * (levels - 1) + ONE_HOT_NUMERIC.length;
  const columns = Array.from({ length: d }, () => new Float64Array(rows));
  const y = new Float64Array(rows);
  const csv: string[] = [["outcome", ...ONE_HOT_TEXT, ...ONE_HOT_NUMERIC].join(",")];
  for (let i = 0; i < rows; i++) {
    let eta = intercept;
    const text: string[] = [];
    for (let t = 0; t < ONE_HOT_TEXT.length; t++) {
      const u = rng.uniform();
      let lv = 0;
      while (lv < levels - 1 && u > cdf[lv]) lv++;
      eta += effects[t][lv];
      if (lv > 0) columns[t * (levels - 1) + (lv - 1)][i] = 1;
      text.push(levelNames[t][lv]);
    }
    const num = [
      rng.normal(),
      Math.round(40 + 12 * rng.normal()),
      Math.round(100 * rng.uniform() * 100) / 100,
      rng.normal(),
      -Math.log(rng.uniform()),
    ];
    const base = ONE_HOT_TEXT.length * (levels - 1);
    for (let j = 0; j < num.length; j++) {
      columns[base + j][i] = num[j];
      eta += numericBeta[j] * (j === 1 ? num[j] - 40 : j === 2 ? num[j] - 50 : num[j]);
    }
    y[i] = rng.uniform() < sigmoid(eta) ? 1 : 0;
    csv.push([y[i] === 1 ? "yes" : "no", ...text, ...num.map((v) => String(v))].join(","));
  }
  const names: string[] = [];
  for (let t = 0; t < ONE_HOT_TEXT.length; t++) {
    for (let lv = 1; lv < levels; lv++) names.push(`${ONE_HOT_TEXT[t]}=${levelNames[t][lv]}`);
  }
  names.push(...ONE_HOT_NUMERIC);
  writeTyped(path.join(DATA_DIR, `${name}.X.f64`), columns);
  writeTyped(path.join(DATA_DIR, `${name}.y.f64`), [y]);
  fs.writeFileSync(path.join(DATA_DIR, `${name}.raw.csv`), csv.join("\n") + "\n");
  writeMeta({
    name,
    kind: "binary",
    rows,
    cols: d,
    names,
    classes: ["0", "1"],
    trueCoefficients: [[intercept - 0.02 * 40 + 0.01 * 50, ...effects.flatMap((e) => e.slice(1)), ...numericBeta]],
    seed,
    generatorVersion: GENERATOR_VERSION,
    description: `${rows} rows: ${ONE_HOT_TEXT.length} text columns x ${levels} Zipf-frequency levels (first level = reference) + ${ONE_HOT_NUMERIC.length} numeric columns; y = "yes" coded 1`,
    files: { X: `${name}.X.f64`, y: `${name}.y.f64`, rawCsv: `${name}.raw.csv` },
  });
}

/** The benchmark's data sets, by name. Each seed differs so the sets are independent. */
export const DATA_SETS: { name: string; quick: boolean; seed: number; make: () => void }[] = [
  { name: "binary_10k", quick: true, seed: SEED + 1, make: () => generateBinary("binary_10k", 10_000, 20, SEED + 1) },
  { name: "binary_100k", quick: false, seed: SEED + 2, make: () => generateBinary("binary_100k", 100_000, 20, SEED + 2) },
  { name: "binary_1m", quick: false, seed: SEED + 3, make: () => generateBinary("binary_1m", 1_000_000, 20, SEED + 3) },
  { name: "multi_10k", quick: true, seed: SEED + 4, make: () => generateMulticlass("multi_10k", 10_000, 20, 5, SEED + 4) },
  { name: "multi_100k", quick: false, seed: SEED + 5, make: () => generateMulticlass("multi_100k", 100_000, 20, 5, SEED + 5) },
  { name: "onehot_10k", quick: true, seed: SEED + 6, make: () => generateOneHot("onehot_10k", 10_000, 50, SEED + 6) },
  { name: "onehot_100k", quick: false, seed: SEED + 7, make: () => generateOneHot("onehot_100k", 100_000, 50, SEED + 7) },
];

/** Writes the data sets that are missing or stale; returns the names written. */
export function ensureData(opts: { quick?: boolean; force?: boolean; only?: string[] } = {}): string[] {
  fs.mkdirSync(DATA_DIR, { recursive: true });
  const written: string[] = [];
  for (const ds of DATA_SETS) {
    if (opts.quick && !ds.quick) continue;
    if (opts.only && !opts.only.includes(ds.name)) continue;
    if (!opts.force && isCurrent(ds.name)) continue;
    ds.make();
    written.push(ds.name);
  }
  return written;
}

if (require.main === module) {
  const args = process.argv.slice(2);
  const t0 = Date.now();
  const written = ensureData({ quick: args.includes("--quick"), force: args.includes("--force") });
  process.stdout.write(
    written.length ? `wrote ${written.join(", ")} in ${((Date.now() - t0) / 1000).toFixed(1)} s\n` : "data up to date\n",
  );
}
