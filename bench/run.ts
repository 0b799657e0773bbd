/**
 * Oddsmith speed benchmark: our engine against general-purpose reference software, on the same data,
 * on the same machine, in the same run.
 *
 *   npm run bench                 full run (a few minutes on 2 cores); writes bench/RESULTS.md
 *   npm run bench -- --quick      smoke run on small data; prints only (add --write to keep it)
 * Other flags: --no-peers, --only=<case,...> (binary_10k, binary_100k, binary_1m, multi_100k,
 *   onehot_100k, cell, boundary, memory, firth; quick names: binary_10k, multi_10k, onehot_10k), --write,
 *   --no-wasm (our side with the JavaScript kernels only, as on an engine without WebAssembly)
 *
 * Method (what a skeptical reader should check):
 * - Data: bench/generate.ts writes seeded files once; every program reads the same bytes.
 * - Inputs (design matrices, labels, cell arrays) are built before the timed region.
 * - Ours: in this process, `warmup` untimed fits (JIT), then timed fits; the median is reported.
 *   A full garbage collection runs before each timed fit so one run's garbage is not billed to the
 *   next. Peers: each tool times its own fit in its own process (bench/peers/), same policy.
 * - Bounded runs: when one fit takes longer than LONG_FIT_SECONDS, the warm-up fit itself counts
 *   as a timed run (flagged "cold"); timed runs stop once they exceed the case's budget.
 * - CPU seconds are recorded next to wall seconds: cpu/wall well below 1 means the process was
 *   waiting for a core (other jobs on the machine), so the load average is printed per case.
 * - Ratios are ours / theirs on medians; log-likelihoods are compared relatively to the Newton fit
 *   of statsmodels (the reference optimum).
 */
import { execFileSync, spawnSync } from "child_process";
import * as fs from "fs";
import * as os from "os";
import * as path from "path";
import { performance } from "perf_hooks";
import * as v8 from "v8";
import * as vm from "vm";
import { DATA_DIR, ensureData, loadDataSet, type LoadedDataSet } from "./generate";
import { firthLimitCase, type FirthLimitInfo } from "./firthLimit";
import { setWasmKernelsEnabled, wasmKernels } from "../src/engine/kernels/wasmKernels";
import { setKernelChoice, type KernelChoice } from "../src/engine/kernels";
import type { CellValue, DesignMatrix, ModelFit, Prediction } from "../src/engine/types";

const ROOT = path.resolve(__dirname, "..");
const PEERS = path.join(__dirname, "peers");
const PYTHON = "/usr/bin/python3";
const LONG_FIT_SECONDS = 2;

// ---- command line -----------------------------------------------------------------------------

const argv = process.argv.slice(2);
const QUICK = argv.includes("--quick");
const NO_PEERS = argv.includes("--no-peers");
const NO_WASM = argv.includes("--no-wasm");
if (NO_WASM) setWasmKernelsEnabled(false);
/** Which kernels our fits use in this run (see src/engine/kernels/wasmKernels.ts). */
const KERNELS = NO_WASM ? "JavaScript only (--no-wasm)" : wasmKernels() ? "WebAssembly SIMD for the Gram-matrix sums and the multi-class score passes, JavaScript for the rest" : "JavaScript only (WebAssembly SIMD unavailable)";
const WRITE = argv.includes("--write") || (!QUICK && !argv.some((a) => a.startsWith("--only")));
const ONLY = (argv.find((a) => a.startsWith("--only="))?.slice(7).split(",") ?? null) as string[] | null;
const wants = (id: string): boolean => !ONLY || ONLY.includes(id);

// ---- engine pieces (loaded by path: the harness runs on whatever pieces exist) ----------------

type FitBinary = (X: DesignMatrix, y: Float64Array, options?: object, classes?: [string, string]) => ModelFit;
type FitMulticlass = (X: DesignMatrix, cls: Int32Array, classes: string[], options?: object) => ModelFit;
type NearBoundary = (p: Prediction, o: { threshold?: number; band: number; undecided?: boolean; limit?: number }) => {
  total: number;
  rows: unknown[];
  withinBand: number;
  undecided: number;
};
type CellAdapter = (...args: (CellValue[][] | null)[]) => CellValue[][];

function loadPiece<T>(file: string, exportName: string): { fn: T | null; why: string } {
  const full = path.join(ROOT, file);
  if (!fs.existsSync(full + ".ts")) return { fn: null, why: `${file}.ts does not exist yet` };
  try {
    // eslint-disable-next-line @typescript-eslint/no-require-imports
    const mod = require(full) as Record<string, unknown>;
    const fn = mod[exportName];
    if (typeof fn !== "function") return { fn: null, why: `${file}.ts has no export ${exportName}` };
    return { fn: fn as T, why: "" };
  } catch (e) {
    return { fn: null, why: `${file}.ts failed to load: ${(e as Error).message.split("\n")[0]}` };
  }
}

// ---- timing helpers ---------------------------------------------------------------------------

v8.setFlagsFromString("--expose-gc");
const gc = vm.runInNewContext("gc") as () => void;

interface Timing {
  times: number[];
  cpu: number[];
  median: number;
  coldFirst: boolean;
  /** Wall seconds of the untimed warm-up runs (ours only): the first one is a cold, un-JITted call. */
  warmupTimes?: number[];
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Times fn() in this process: warm-up, then timed runs within the budget (seconds). */
function timeOurs<T>(fn: () => T, warmup: number, runs: number, budget: number): Timing & { last: T } {
  const times: number[] = [];
  const cpu: number[] = [];
  const warmupTimes: number[] = [];
  let coldFirst = false;
  let done = 0;
  let last!: T;
  for (;;) {
    gc();
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    last = fn();
    const dt = (performance.now() - t0) / 1000;
    const c = process.cpuUsage(c0);
    if (done < warmup && !(dt > LONG_FIT_SECONDS && times.length === 0)) {
      done++;
      warmupTimes.push(dt);
      continue;
    }
    if (done < warmup) {
      coldFirst = true;
      done = warmup;
    }
    times.push(dt);
    cpu.push((c.user + c.system) / 1e6);
    if (times.length >= runs || times.reduce((a, b) => a + b, 0) + dt > budget) break;
  }
  return { times, cpu, median: median(times), coldFirst, warmupTimes, last };
}

const INTERLEAVED_LONG_SECONDS = 10;

/** Times a() and b() alternately (a, b, a, b, ...) under one policy; returns both timings. */
function timeInterleaved(a: () => unknown, b: () => unknown, p: RunPolicy): [Timing, Timing] {
  const ta: number[] = [];
  const tb: number[] = [];
  const ca: number[] = [];
  const cb: number[] = [];
  const once = (fn: () => unknown): [number, number] => {
    gc();
    const c0 = process.cpuUsage();
    const t0 = performance.now();
    fn();
    const dt = (performance.now() - t0) / 1000;
    const c = process.cpuUsage(c0);
    return [dt, (c.user + c.system) / 1e6];
  };
  let coldFirst = false;
  for (let w = 0; w < p.warmup; w++) {
    const [da] = once(a);
    const [db] = once(b);
    if (da > INTERLEAVED_LONG_SECONDS || db > INTERLEAVED_LONG_SECONDS) {
      // Long calls: the warm-up pair counts as the first timed pair (a first call of a few seconds
      // can be JIT and parsing warm-up, so the bar is higher than for single fits).
      coldFirst = true;
      ta.push(da);
      tb.push(db);
      ca.push(NaN);
      cb.push(NaN);
      break;
    }
  }
  while (ta.length < p.runs && ta.reduce((s, x) => s + x, 0) + tb.reduce((s, x) => s + x, 0) < p.budget) {
    const [da, xa] = once(a);
    const [db, xb] = once(b);
    ta.push(da);
    tb.push(db);
    ca.push(xa);
    cb.push(xb);
  }
  return [
    { times: ta, cpu: ca, median: median(ta), coldFirst },
    { times: tb, cpu: cb, median: median(tb), coldFirst },
  ];
}

function loadNow(): string {
  return os
    .loadavg()
    .map((l) => l.toFixed(2))
    .join(" ");
}

function fmtS(s: number | undefined): string {
  if (s === undefined || !Number.isFinite(s)) return "-";
  if (s < 1) return `${(s * 1000).toFixed(s < 0.01 ? 2 : 1)} ms`;
  return `${s.toFixed(2)} s`;
}

function fmtRel(r: number | undefined): string {
  if (r === undefined || !Number.isFinite(r)) return "-";
  if (r === 0) return "0";
  return r.toExponential(1);
}

// ---- peers ------------------------------------------------------------------------------------

interface PeerSpec {
  label: string;
  cmd: string;
  args: string[];
  /** The tool whose log-likelihood is the reference optimum. */
  reference?: boolean;
}

interface PeerResult {
  label: string;
  ok: boolean;
  error?: string;
  times?: number[];
  cpu?: number[];
  coldFirst?: boolean;
  median?: number;
  logLik?: number;
  iterations?: number | null;
  converged?: boolean;
  warnings?: string[];
  version?: string;
  reference?: boolean;
}

interface PeerAvailability {
  python: boolean;
  sklearn: string | null;
  statsmodels: string | null;
  numpy: string | null;
  pythonVersion: string | null;
  r: string | null;
  nnet: string | null;
  notes: string[];
}

function checkPeers(): PeerAvailability {
  const a: PeerAvailability = { python: false, sklearn: null, statsmodels: null, numpy: null, pythonVersion: null, r: null, nnet: null, notes: [] };
  if (fs.existsSync(PYTHON)) {
    a.python = true;
    const probe = (mod: string): string | null => {
      const r = spawnSync(PYTHON, ["-c", `import ${mod}; print(${mod}.__version__)`], { encoding: "utf8" });
      return r.status === 0 ? r.stdout.trim() : null;
    };
    a.pythonVersion = spawnSync(PYTHON, ["-c", "import sys; print(sys.version.split()[0])"], { encoding: "utf8" }).stdout.trim() || null;
    a.numpy = probe("numpy");
    a.sklearn = probe("sklearn");
    a.statsmodels = probe("statsmodels");
    if (!a.sklearn) a.notes.push("scikit-learn is missing (apt-get install python3-sklearn)");
    if (!a.statsmodels) a.notes.push("statsmodels is missing (apt-get install python3-statsmodels)");
  } else {
    a.notes.push(`${PYTHON} is missing: no Python peers`);
  }
  const r = spawnSync("Rscript", ["-e", 'cat(paste(R.version$major, R.version$minor, sep="."), "\\n")'], { encoding: "utf8" });
  if (r.status === 0) {
    a.r = r.stdout.trim();
    const n = spawnSync("Rscript", ["-e", 'cat(as.character(packageVersion("nnet")), "\\n")'], { encoding: "utf8" });
    a.nnet = n.status === 0 ? n.stdout.trim() : null;
    if (!a.nnet) a.notes.push("R package nnet is missing (apt-get install r-cran-nnet)");
  } else {
    a.notes.push("Rscript is missing (apt-get install r-base-core r-cran-nnet): no R peers");
  }
  return a;
}

function peerSpecs(avail: PeerAvailability, ds: LoadedDataSet, plan: Plan): PeerSpec[] {
  const specs: PeerSpec[] = [];
  const py = (tool: string, solver: string, label: string, reference = false, p = plan.peer): void => {
    specs.push({ label, cmd: PYTHON, args: [path.join(PEERS, "python_peer.py"), ds.meta.name, tool, solver, String(p.warmup), String(p.runs), String(p.budget)], reference });
  };
  const r = (tool: string, label: string, p = plan.peer): void => {
    specs.push({ label, cmd: "Rscript", args: [path.join(PEERS, "r_peer.R"), ds.meta.name, tool, String(p.warmup), String(p.runs), String(p.budget)] });
  };
  const binary = ds.meta.kind === "binary";
  if (avail.sklearn) {
    py("sklearn", "lbfgs", "sklearn lbfgs");
    if (plan.allSolvers) py("sklearn", "newton-cg", "sklearn newton-cg");
    if (binary && plan.allSolvers) py("sklearn", "newton-cholesky", "sklearn newton-cholesky");
  }
  if (avail.statsmodels) py("statsmodels", "newton", binary ? "statsmodels Logit newton" : "statsmodels MNLogit newton", true, plan.referencePeer ?? plan.peer);
  if (avail.r && binary) r("glm.fit", "R glm.fit (IRLS)");
  if (avail.r && avail.nnet && !binary) r("multinom", "R nnet::multinom (BFGS)", plan.slowPeer ?? plan.peer);
  const kept = specs.filter((s) => !(plan.skip ?? []).includes(s.label));
  if (plan.referenceLabel) for (const s of kept) s.reference = s.label === plan.referenceLabel;
  return kept;
}

function runPeer(spec: PeerSpec): PeerResult {
  const res = spawnSync(spec.cmd, spec.args, { encoding: "utf8", maxBuffer: 1 << 24, env: { ...process.env } });
  if (res.status !== 0) {
    return { label: spec.label, ok: false, error: (res.stderr || res.error?.message || "failed").trim().split("\n").slice(-3).join(" | ") };
  }
  const line = res.stdout.trim().split("\n").pop() ?? "";
  try {
    const j = JSON.parse(line) as Omit<PeerResult, "label" | "ok">;
    return { ...j, label: spec.label, ok: true, reference: spec.reference };
  } catch {
    return { label: spec.label, ok: false, error: `unreadable output: ${line.slice(0, 200)}` };
  }
}

// ---- cases ------------------------------------------------------------------------------------

interface RunPolicy {
  warmup: number;
  runs: number;
  budget: number;
}

interface Plan {
  ours: RunPolicy;
  peer: RunPolicy;
  referencePeer?: RunPolicy;
  slowPeer?: RunPolicy;
  allSolvers: boolean;
  /** Peers left out of this case to keep the run within a few minutes (named in RESULTS.md). */
  skip?: string[];
  /** Label of the peer whose log-likelihood is the reference [the statsmodels Newton fit]. */
  referenceLabel?: string;
  /** Runs of our fit on the other kernel paths (JavaScript blocks, plain reference), side by side. */
  kernels?: RunPolicy;
}

interface OursResult extends Timing {
  ok: boolean;
  error?: string;
  logLik?: number;
  iterations?: number;
  converged?: boolean;
  diagnostics?: string[];
  /** Rows that entered our fit (must equal the data set's rows for a like-for-like comparison). */
  rowsUsed?: number;
}

interface CaseResult {
  id: string;
  title: string;
  dataset: string;
  rows: number;
  cols: number;
  classes: number;
  loadBefore: string;
  loadAfter: string;
  ours: OursResult;
  /** Our fit forced onto another kernel path (absent in records written before this comparison). */
  kernelRuns?: { choice: KernelChoice; label: string; result: OursResult }[];
  peers: PeerResult[];
  skipped?: string[];
}

function designOf(ds: LoadedDataSet): DesignMatrix {
  return { rows: ds.meta.rows, columns: ds.columns, names: ds.meta.names };
}

function fitCase(id: string, title: string, ds: LoadedDataSet, plan: Plan, avail: PeerAvailability | null): CaseResult {
  const loadBefore = loadNow();
  const X = designOf(ds);
  let ours: OursResult;
  if (ds.meta.kind === "binary") {
    const { fn, why } = loadPiece<FitBinary>("src/engine/binary", "fitBinaryModel");
    ours = fn ? runOurs(() => fn(X, ds.y!), plan.ours) : missing(why);
  } else {
    const { fn, why } = loadPiece<FitMulticlass>("src/engine/multiclass", "fitMulticlassModel");
    ours = fn ? runOurs(() => fn(X, ds.classIndex!, ds.meta.classes), plan.ours) : missing(why);
  }
  log(`  ours: ${ours.ok ? `${fmtS(ours.median)} (runs ${ours.times.map((t) => fmtS(t)).join(", ")}; cpu/wall ${cpuWall(ours)}) logLik ${ours.logLik}` : `not run: ${ours.error}`}`);
  const kernelRuns = plan.kernels && !NO_WASM ? otherKernels(ds, X, plan.kernels) : undefined;
  const peers: PeerResult[] = [];
  if (avail) {
    for (const spec of peerSpecs(avail, ds, plan)) {
      const p = runPeer(spec);
      peers.push(p);
      log(`  ${p.label}: ${p.ok ? `${fmtS(p.median)} (runs ${p.times!.map((t) => fmtS(t)).join(", ")}${p.coldFirst ? ", cold" : ""}) logLik ${p.logLik}` : `FAILED ${p.error}`}`);
    }
  }
  return { id, title, dataset: ds.meta.name, rows: ds.meta.rows, cols: ds.meta.cols, classes: ds.meta.classes.length, loadBefore, loadAfter: loadNow(), ours, kernelRuns, peers, skipped: avail ? plan.skip ?? [] : [] };
}

/** The kernel paths timed beside the automatic choice: the JavaScript blocks and the plain reference loops. */
const OTHER_KERNELS: { choice: KernelChoice; label: string }[] = [
  { choice: "blocks", label: "Oddsmith, JavaScript kernel" },
  { choice: "reference", label: "Oddsmith, reference kernel" },
];

/** Our fit of the same case on each other kernel path (same data, same rules, only the kernel differs). */
function otherKernels(ds: LoadedDataSet, X: DesignMatrix, p: RunPolicy): { choice: KernelChoice; label: string; result: OursResult }[] {
  const out: { choice: KernelChoice; label: string; result: OursResult }[] = [];
  for (const k of OTHER_KERNELS) {
    setKernelChoice(k.choice);
    try {
      let result: OursResult;
      if (ds.meta.kind === "binary") {
        const { fn, why } = loadPiece<FitBinary>("src/engine/binary", "fitBinaryModel");
        result = fn ? runOurs(() => fn(X, ds.y!), p) : missing(why);
      } else {
        const { fn, why } = loadPiece<FitMulticlass>("src/engine/multiclass", "fitMulticlassModel");
        result = fn ? runOurs(() => fn(X, ds.classIndex!, ds.meta.classes), p) : missing(why);
      }
      out.push({ ...k, result });
      log(`  ${k.label}: ${result.ok ? `${fmtS(result.median)} logLik ${result.logLik}` : `not run: ${result.error}`}`);
    } finally {
      setKernelChoice("auto");
    }
  }
  return out;
}

function runOurs(fit: () => ModelFit, p: RunPolicy): OursResult {
  try {
    const t = timeOurs(fit, p.warmup, p.runs, p.budget);
    const f = t.last;
    return {
      ok: true,
      times: t.times,
      cpu: t.cpu,
      median: t.median,
      coldFirst: t.coldFirst,
      warmupTimes: t.warmupTimes,
      logLik: f.logLikelihood,
      iterations: f.iterations,
      converged: f.converged,
      diagnostics: f.diagnostics.map((d) => `${d.severity}:${d.code}`),
      rowsUsed: f.rowsUsed,
    };
  } catch (e) {
    return missing(`threw: ${(e as Error).message.split("\n")[0]}`);
  }
}

function missing(why: string): OursResult {
  return { ok: false, error: why, times: [], cpu: [], median: NaN, coldFirst: false };
}

function cpuWall(t: { times: number[]; cpu: number[] }): string {
  const w = t.times.reduce((a, b) => a + b, 0);
  const c = t.cpu.reduce((a, b) => a + b, 0);
  return w > 0 ? (c / w).toFixed(2) : "-";
}

// ---- cell-function path -----------------------------------------------------------------------

interface CellResultInfo {
  ok: boolean;
  dataset: string;
  /** What the worksheet holds: "numbers" or "text categories + numbers". */
  form: string;
  error?: string;
  rule: string;
  rows: number;
  cols: number;
  inputBytes: number;
  outputBytes: number;
  whole?: Timing;
  cached?: Timing;
  engine?: Timing;
  overhead?: number;
  guardAccepts?: boolean;
  loadBefore: string;
  loadAfter: string;
}

const PAYLOAD_LIMIT = 5_000_000;

/**
 * Worksheet-shaped arrays (header row + data rows) of the first `n` rows of a binary data set: the
 * numeric columns as numbers, or, for a set with a raw CSV (the one-hot set), the rows as a sheet
 * holds them: "yes"/"no" labels, text categories and numbers.
 */
function cellArrays(ds: LoadedDataSet, n: number): { labels: CellValue[][]; predictors: CellValue[][] } {
  if (ds.meta.files.rawCsv) {
    const lines = rawCsvLines(ds);
    const header = lines[0].split(",");
    const labels: CellValue[][] = [[header[0]]];
    const predictors: CellValue[][] = [header.slice(1)];
    for (let i = 1; i <= n; i++) {
      const cells = lines[i].split(",");
      labels.push([cells[0]]);
      predictors.push(cells.slice(1).map((c) => (/^[-0-9.]/.test(c) ? Number(c) : c)));
    }
    return { labels, predictors };
  }
  const labels: CellValue[][] = [["y"]];
  const predictors: CellValue[][] = [ds.meta.names.slice()];
  for (let i = 0; i < n; i++) {
    labels.push([ds.y![i]]);
    const row: CellValue[] = new Array(ds.meta.cols);
    for (let j = 0; j < ds.meta.cols; j++) row[j] = ds.columns[j][i];
    predictors.push(row);
  }
  return { labels, predictors };
}

const csvCache = new Map<string, string[]>();
function rawCsvLines(ds: LoadedDataSet): string[] {
  const file = path.join(DATA_DIR, ds.meta.files.rawCsv!);
  if (!csvCache.has(file)) csvCache.set(file, fs.readFileSync(file, "utf8").split("\n"));
  return csvCache.get(file)!;
}

function sliceDesign(ds: LoadedDataSet, n: number): { X: DesignMatrix; y: Float64Array } {
  return {
    X: { rows: n, columns: ds.columns.map((c) => c.slice(0, n)), names: ds.meta.names },
    y: ds.y!.slice(0, n),
  };
}

function cellCase(ds: LoadedDataSet, p: RunPolicy): CellResultInfo {
  const loadBefore = loadNow();
  const rule =
    "JSON text of all arguments plus the spilled result <= 5,000,000 bytes (Office's ~5 MB per-call payload), with the values as generated (full double precision, ~19 characters per number)";
  const form = ds.meta.files.rawCsv ? "text categories + numbers (the one-hot set as a sheet holds it)" : "numbers";
  const cols = ds.meta.files.rawCsv ? rawCsvLines(ds)[0].split(",").length - 1 : ds.meta.cols;
  const base = { dataset: ds.meta.name, form, rule, rows: 0, cols, inputBytes: 0, outputBytes: 0, loadBefore };
  const reg = loadPiece<unknown>("src/functions/registry", "CELL_FUNCTIONS");
  let adapter: CellAdapter | null = null;
  if (!reg.fn && !fs.existsSync(path.join(ROOT, "src/functions/registry.ts"))) return { ...base, ok: false, error: reg.why, loadAfter: loadNow() };
  try {
    // eslint-disable-next-line @typescript-eslint/no-require-imports
    const mod = require(path.join(ROOT, "src/functions/registry")) as { CELL_FUNCTIONS?: { name: string; adapter: CellAdapter }[] };
    adapter = mod.CELL_FUNCTIONS?.find((f) => f.name === "FIT")?.adapter ?? null;
  } catch (e) {
    return { ...base, ok: false, error: `registry failed to load: ${(e as Error).message.split("\n")[0]}`, loadAfter: loadNow() };
  }
  const fitBinary = loadPiece<FitBinary>("src/engine/binary", "fitBinaryModel").fn;
  if (!adapter || !fitBinary) return { ...base, ok: false, error: "FIT adapter or fitBinaryModel missing", loadAfter: loadNow() };
  let clearCache: () => void = () => undefined;
  try {
    // eslint-disable-next-line @typescript-eslint/no-require-imports
    const mc = require(path.join(ROOT, "src/shared/fitService")) as { modelCache?: () => { clear(): void } };
    if (mc.modelCache) clearCache = () => mc.modelCache!().clear();
  } catch {
    /* no cache module: nothing to clear */
  }

  // Largest n within the limit: input bytes grow linearly in n, so size one row from a 1,000-row
  // sample, start from the largest n that allows, and step down until the exact JSON size of the
  // inputs plus the actual spilled result fits. (Only the full-size call is fitted: a small sample
  // of the one-hot set can be genuinely separated by its rare levels.)
  const sample = cellArrays(ds, Math.min(1000, ds.meta.rows));
  const sampleRows = sample.labels.length - 1;
  const perRow = (JSON.stringify(sample.labels).length + JSON.stringify(sample.predictors).length) / sampleRows;
  let outBytes = 8000; // first guess at the spilled table; replaced by the real size below
  let n = Math.min(ds.meta.rows, Math.floor((PAYLOAD_LIMIT - outBytes) / perRow));
  let arrays = cellArrays(ds, n);
  let inBytes = 0;
  let out: CellValue[][] = [];
  let guardLimited = false;
  for (let attempt = 0; attempt < 40; attempt++) {
    inBytes = JSON.stringify(arrays.labels).length + JSON.stringify(arrays.predictors).length;
    if (inBytes + outBytes > PAYLOAD_LIMIT) {
      n -= Math.max(1, Math.ceil((inBytes + outBytes - PAYLOAD_LIMIT) / perRow));
      arrays = cellArrays(ds, n);
      continue;
    }
    try {
      clearCache();
      out = adapter(arrays.labels, arrays.predictors, null);
    } catch (e) {
      if ((e as { code?: string }).code === "RANGE_TOO_LARGE") {
        // The add-in's own guard estimates more conservatively than the JSON size: follow it.
        guardLimited = true;
        n = Math.floor(n * 0.995);
        arrays = cellArrays(ds, n);
        continue;
      }
      return { ...base, rows: n, inputBytes: inBytes, ok: false, guardAccepts: false, error: `FIT at ${n} rows threw: ${(e as Error).message.split("\n")[0]}`, loadAfter: loadNow() };
    }
    const actual = JSON.stringify(out).length;
    if (inBytes + actual <= PAYLOAD_LIMIT) {
      outBytes = actual;
      break;
    }
    outBytes = actual;
  }
  const { labels, predictors } = arrays;
  // The adapter (which runs the add-in's payload guard) accepted this size; guardLimited says the
  // guard, not the JSON rule, set the size.
  const guardAccepts = !guardLimited;
  // Whole call, cold (the fit cache cleared before every call: a first calculation or an edit),
  // and the engine fit alone on the same rows, INTERLEAVED run by run so both see the same machine
  // load; the overhead is the difference of their medians.
  const { X, y } = sliceDesign(ds, n);
  const [whole, engine] = timeInterleaved(
    () => {
      clearCache();
      return adapter!(labels, predictors, null);
    },
    () => fitBinary(X, y),
    p,
  );
  // Whole call, warm: the same call again with the fit cached (a recalculation with unchanged data).
  clearCache();
  adapter(labels, predictors, null);
  const cached = timeOurs(() => adapter!(labels, predictors, null), p.warmup, p.runs, p.budget);
  clearCache();
  const overhead = (whole.median - engine.median) / whole.median;
  return { ...base, ok: true, rows: n, inputBytes: inBytes, outputBytes: outBytes, whole, cached, engine, overhead, guardAccepts, loadAfter: loadNow() };
}

// ---- borderline rows --------------------------------------------------------------------------

interface BoundaryInfo {
  ok: boolean;
  error?: string;
  rows: number;
  select?: Timing;
  predictAndSelect?: Timing;
  predictSource: string;
  qualified?: number;
  listed?: number;
  loadBefore: string;
  loadAfter: string;
}

function boundaryCase(ds: LoadedDataSet, p: RunPolicy): BoundaryInfo {
  const loadBefore = loadNow();
  const base = { rows: ds.meta.rows, predictSource: "", loadBefore };
  const near = loadPiece<NearBoundary>("src/engine/boundary", "nearBoundaryRows");
  if (!near.fn) return { ...base, ok: false, error: near.why, loadAfter: loadNow() };
  const X = designOf(ds);
  // The model to score with: our fit when it exists, else the generator's true coefficients (the
  // borderline computation does not depend on how the coefficients were obtained).
  const fitBinary = loadPiece<FitBinary>("src/engine/binary", "fitBinaryModel").fn;
  const fit = fitBinary ? fitBinary(X, ds.y!) : null;
  const predictor = loadPiece<(fit: ModelFit, X: DesignMatrix, o?: object) => Prediction>("src/engine/predictBinary", "predictBinary");
  let predict: () => Prediction;
  let predictSource: string;
  if (predictor.fn && fit) {
    predict = () => predictor.fn!(fit, X, { threshold: 0.5 });
    predictSource = "predictBinary (probabilities with logit-scale intervals) from our fit";
  } else {
    const beta = fit ? Array.from(fit.coefficients[0]) : ds.meta.trueCoefficients[0];
    predictSource = `harness-side scoring (${predictor.why || "no fit"}): probabilities only, no intervals`;
    predict = () => {
      const n = ds.meta.rows;
      const eta = new Float64Array(n).fill(beta[0]);
      for (let j = 0; j < ds.meta.cols; j++) {
        const c = ds.columns[j];
        const b = beta[j + 1];
        for (let i = 0; i < n; i++) eta[i] += b * c[i];
      }
      const p1 = new Float64Array(n);
      const p0 = new Float64Array(n);
      const margin = new Float64Array(n);
      const predicted = new Int32Array(n);
      for (let i = 0; i < n; i++) {
        const v = eta[i] >= 0 ? 1 / (1 + Math.exp(-eta[i])) : Math.exp(eta[i]) / (1 + Math.exp(eta[i]));
        p1[i] = v;
        p0[i] = 1 - v;
        margin[i] = Math.abs(v - 0.5);
        predicted[i] = v >= 0.5 ? 1 : 0;
      }
      return { probabilities: [p0, p1], predicted, margin, linearPredictor: eta };
    };
  }
  try {
    const prediction = predict();
    const opts = { threshold: 0.5, band: 0.05 };
    const select = timeOurs(() => near.fn!(prediction, opts), p.warmup, p.runs, p.budget);
    const predictAndSelect = timeOurs(() => near.fn!(predict(), opts), p.warmup, p.runs, p.budget);
    return {
      ...base,
      ok: true,
      predictSource,
      select,
      predictAndSelect,
      qualified: select.last.total,
      listed: select.last.rows.length,
      loadAfter: loadNow(),
    };
  } catch (e) {
    return { ...base, ok: false, predictSource, error: `threw: ${(e as Error).message.split("\n")[0]}`, loadAfter: loadNow() };
  }
}

// ---- peak memory (separate process, so the figures are not inflated by earlier cases) -------

interface MemoryInfo {
  ok: boolean;
  error?: string;
  rows: number;
  cols: number;
  rawBytes: number;
  rssRuntime?: number;
  rssAfterLoad?: number;
  peakRss?: number;
  peakAfterLoad?: number;
  heapBefore?: number;
  heapAfter?: number;
  arrayBuffersBefore?: number;
  arrayBuffersAfter?: number;
  /** Peak RSS minus the runtime's RSS before the data was loaded: data + everything the fit allocates. */
  dataAndFit?: number;
  /** Peak RSS during the fit minus RSS after loading: the fit's own working memory. */
  fitExtra?: number;
  seconds?: number;
}

function memoryChild(name: string): void {
  const { fn, why } = loadPiece<FitBinary>("src/engine/binary", "fitBinaryModel");
  const mb = (): NodeJS.MemoryUsage => process.memoryUsage();
  if (!fn) {
    process.stdout.write(JSON.stringify({ ok: false, error: why }) + "\n");
    return;
  }
  gc();
  const rssRuntime = mb().rss;
  const ds = loadDataSet(name);
  const X = designOf(ds);
  gc();
  const m1 = mb();
  const peakAfterLoad = process.resourceUsage().maxRSS * 1024;
  const t0 = performance.now();
  const fit = fn(X, ds.y!);
  const seconds = (performance.now() - t0) / 1000;
  const peakRss = process.resourceUsage().maxRSS * 1024;
  gc(); // what the fit result still holds once its temporaries are collected
  const m2 = mb();
  if (fit.coefficients.length === 0) process.exitCode = 1; // keeps `fit` alive through the gc above
  const out: MemoryInfo = {
    ok: fit.coefficients.length > 0,
    rows: ds.meta.rows,
    cols: ds.meta.cols,
    rawBytes: ds.meta.rows * ds.meta.cols * 8,
    rssRuntime,
    rssAfterLoad: m1.rss,
    peakAfterLoad,
    peakRss,
    heapBefore: m1.heapUsed,
    heapAfter: m2.heapUsed,
    arrayBuffersBefore: m1.arrayBuffers,
    arrayBuffersAfter: m2.arrayBuffers,
    dataAndFit: peakRss - rssRuntime,
    fitExtra: Math.max(0, peakRss - m1.rss),
    seconds,
  };
  process.stdout.write(JSON.stringify(out) + "\n");
}

function memoryCase(name: string, rows: number, cols: number): MemoryInfo {
  const tsxCli = require.resolve("tsx/cli");
  const res = spawnSync(process.execPath, [tsxCli, __filename, "--memory-child", name, ...(NO_WASM ? ["--no-wasm"] : [])], { encoding: "utf8", maxBuffer: 1 << 24 });
  const base = { rows, cols, rawBytes: rows * cols * 8 };
  if (res.status !== 0) return { ...base, ok: false, error: (res.stderr || "child failed").trim().split("\n").slice(-3).join(" | ") };
  try {
    return { ...base, ...(JSON.parse(res.stdout.trim().split("\n").pop() ?? "") as MemoryInfo) };
  } catch {
    return { ...base, ok: false, error: `unreadable child output: ${res.stdout.slice(0, 200)}` };
  }
}

// ---- report -----------------------------------------------------------------------------------

interface RunRecord {
  date: string;
  quick: boolean;
  machine: { nproc: number; memoryGB: number; cpu: string; os: string };
  versions: Record<string, string | null>;
  /** Which kernels our fits used (absent in records written before the WebAssembly kernels). */
  kernels?: string;
  peersMissing: string[];
  uptimeStart: string;
  uptimeEnd: string;
  seconds: number;
  cases: CaseResult[];
  cells: CellResultInfo[];
  boundary: BoundaryInfo | null;
  memory: MemoryInfo | null;
  /** The largest accepted bias-reduced fit (absent in records written before this case). */
  firth?: FirthLimitInfo | null;
  targets: Target[];
  commit: string;
}

interface Target {
  name: string;
  goal: string;
  measured: string;
  status: "met" | "not met" | "not measured";
}

function peer(c: CaseResult | undefined, label: string): PeerResult | undefined {
  return c?.peers.find((p) => p.ok && p.label === label);
}

function reference(c: CaseResult): PeerResult | undefined {
  return c.peers.find((p) => p.ok && p.reference);
}

function relDiff(a: number | undefined, b: number | undefined): number | undefined {
  if (a === undefined || b === undefined || !Number.isFinite(a) || !Number.isFinite(b)) return undefined;
  return Math.abs(a - b) / Math.abs(b);
}

const LOGLIK_AGREEMENT = 1e-6;

function evaluateTargets(r: RunRecord): Target[] {
  const t: Target[] = [];
  const byId = (id: string) => r.cases.find((c) => c.id === id);
  const speed = (name: string, id: string, peerLabel: string, factor: number, withLogLik: boolean): void => {
    const c = byId(id);
    const p = peer(c, peerLabel);
    const ref = c ? reference(c) : undefined;
    const goal = `ours <= ${factor} x ${peerLabel}` + (withLogLik ? `; logLik within ${LOGLIK_AGREEMENT} relative of ${ref?.label ?? "statsmodels Newton"}` : "");
    if (!c || !c.ours.ok || !p) {
      t.push({ name, goal, measured: !c ? "case not run" : !c.ours.ok ? `ours not run (${c.ours.error})` : `${peerLabel} not available`, status: "not measured" });
      return;
    }
    const ratio = c.ours.median / p.median!;
    let measured = `${fmtS(c.ours.median)} vs ${fmtS(p.median)}: ratio ${ratio.toFixed(2)}`;
    let ok = ratio <= factor;
    if (withLogLik) {
      const d = relDiff(c.ours.logLik, ref?.logLik);
      measured += `; logLik rel. diff ${d === undefined ? "not measured" : fmtRel(d)}`;
      ok = ok && d !== undefined && d <= LOGLIK_AGREEMENT;
    }
    t.push({ name, goal, measured, status: ok ? "met" : "not met" });
  };
  speed("Binary 100,000 x 20", "binary_100k", "sklearn lbfgs", 0.8, true);
  speed("Binary 1,000,000 x 20", "binary_1m", "sklearn lbfgs", 1.0, false);
  const m = r.memory;
  if (m && m.ok && m.dataAndFit !== undefined) {
    const ratio = m.dataAndFit / m.rawBytes;
    t.push({
      name: "Peak memory, binary 1,000,000 x 20 fit",
      goal: "peak (data + fit) <= 2.5 x raw data size",
      measured: `${mbs(m.dataAndFit)} = ${ratio.toFixed(2)} x raw ${mbs(m.rawBytes)} (fit's own extra ${mbs(m.fitExtra!)}; whole process incl. Node runtime ${mbs(m.peakRss!)})`,
      status: ratio <= 2.5 ? "met" : "not met",
    });
  } else t.push({ name: "Peak memory, binary 1,000,000 x 20 fit", goal: "peak <= 2.5 x raw data size", measured: m?.error ?? "not run", status: "not measured" });
  speed("Multi-class 100,000 x 20 x 5", "multi_100k", "sklearn lbfgs", 1.0, true);
  {
    const c = byId("onehot_100k");
    const sk = c?.peers.filter((p) => p.ok && p.label.startsWith("sklearn")) ?? [];
    const fastest = sk.sort((a, b) => a.median! - b.median!)[0];
    if (!c || !c.ours.ok || !fastest) {
      t.push({ name: "One-hot-heavy 100,000 rows (3 x 50 levels + 5 numeric)", goal: "ours <= sklearn's fastest solver", measured: !c ? "case not run" : !c.ours.ok ? `ours not run (${c.ours.error})` : "sklearn not available", status: "not measured" });
    } else {
      const ratio = c.ours.median / fastest.median!;
      const ref = reference(c);
      t.push({
        name: "One-hot-heavy 100,000 rows (3 x 50 levels + 5 numeric)",
        goal: "ours <= sklearn's fastest solver",
        measured: `${fmtS(c.ours.median)} vs ${fastest.label} ${fmtS(fastest.median)}: ratio ${ratio.toFixed(2)}; logLik rel. diff ours ${fmtRel(relDiff(c.ours.logLik, ref?.logLik))}, ${fastest.label} ${fmtRel(relDiff(fastest.logLik, ref?.logLik))}`,
        status: ratio <= 1 ? "met" : "not met",
      });
    }
  }
  if (r.cells.length === 0) t.push({ name: "Cell-function overhead", goal: "parsing + formatting <= 25% of the whole call", measured: "not run", status: "not measured" });
  for (const cell of r.cells) {
    const name = `Cell-function overhead, ${cell.form.split(" (")[0]}${cell.ok ? ` at ${cell.rows.toLocaleString("en-US")} rows x ${cell.cols} columns (largest in-limit size)` : ""}`;
    if (cell.ok) {
      t.push({
        name,
        goal: "parsing + formatting <= 25% of the whole call",
        measured: `whole ${fmtS(cell.whole!.median)}, engine fit ${fmtS(cell.engine!.median)}: overhead ${(cell.overhead! * 100).toFixed(1)}%`,
        status: cell.overhead! <= 0.25 ? "met" : "not met",
      });
    } else t.push({ name, goal: "parsing + formatting <= 25% of the whole call", measured: cell.error ?? "not run", status: "not measured" });
  }
  const b = r.boundary;
  if (b && b.ok) {
    // Judged on the borderline-row computation itself (nearBoundaryRows on a ready prediction);
    // scoring the rows first is reported beside it, and is a target of its own when it misses.
    const both = b.predictAndSelect!.median;
    t.push({
      name: `Borderline rows at ${b.rows.toLocaleString("en-US")} rows`,
      goal: "< 200 ms (nearBoundaryRows on a ready prediction)",
      measured: `selection ${fmtS(b.select!.median)}; for information, scoring the rows first + selection ${fmtS(both)}${both < 0.2 ? "" : " (over 200 ms)"}`,
      status: b.select!.median < 0.2 ? "met" : "not met",
    });
  } else t.push({ name: "Borderline rows at 1,000,000 rows", goal: "< 200 ms", measured: b?.error ?? "not run", status: "not measured" });
  const f = r.firth;
  if (f && f.ok) {
    t.push({
      name: `Firth at its work limit (${f.rows.toLocaleString("en-US")} rows x ${f.terms} terms, ODDS.FIT)`,
      goal: "< 5 s (every accepted call answers within a few seconds)",
      measured: `median ${fmtS(f.median)}${f.iterations ? ` (${f.iterations} iterations)` : ""}`,
      status: f.median < 5 ? "met" : "not met",
    });
  } else if (f) t.push({ name: "Firth at its work limit", goal: "< 5 s", measured: f.error ?? "not run", status: "not measured" });
  // A quick run measures smaller data than the targets name: report, but judge nothing.
  if (r.quick) {
    for (const x of t) {
      if (x.status !== "not measured") x.measured = `quick run on smaller data: ${x.measured}`;
      x.status = "not measured";
    }
  }
  return t;
}

function mbs(bytes: number): string {
  return `${(bytes / 1e6).toFixed(0)} MB`;
}

function caseTable(c: CaseResult): string[] {
  const ref = reference(c);
  const lines = [
    `#### ${c.title} (${c.dataset}: ${c.rows.toLocaleString("en-US")} rows x ${c.cols} columns${c.classes > 2 ? `, ${c.classes} classes` : ""})`,
    "",
    `Load average before / after: ${c.loadBefore} / ${c.loadAfter}`,
    "",
    "| program | median | runs (s) | cpu/wall | ours / theirs | logLik | rel. diff to reference | iterations |",
    "|---|---|---|---|---|---|---|---|",
  ];
  if (c.ours.ok) {
    lines.push(
      `| **Oddsmith** | **${fmtS(c.ours.median)}** | ${c.ours.times.map((t) => t.toFixed(3)).join(", ")}${c.ours.coldFirst ? " (cold)" : ""}${c.ours.warmupTimes && c.ours.warmupTimes.length ? `; warm-up ${c.ours.warmupTimes.map((t) => t.toFixed(3)).join(", ")}` : ""} | ${cpuWall(c.ours)} | 1 | ${c.ours.logLik?.toFixed(6)} | ${fmtRel(relDiff(c.ours.logLik, ref?.logLik))} | ${c.ours.iterations}${c.ours.converged ? "" : " (not converged)"} |`,
    );
  } else lines.push(`| Oddsmith | not run: ${c.ours.error} | | | | | | |`);
  for (const k of c.kernelRuns ?? []) {
    const r = k.result;
    if (!r.ok) {
      lines.push(`| ${k.label} | not run: ${r.error} | | | | | | |`);
      continue;
    }
    const ratio = c.ours.ok ? (c.ours.median / r.median).toFixed(2) : "-";
    lines.push(
      `| ${k.label} | ${fmtS(r.median)} | ${r.times.map((t) => t.toFixed(3)).join(", ")}${r.coldFirst ? " (cold)" : ""} | ${cpuWall(r)} | ${ratio} | ${r.logLik?.toFixed(6)} | ${fmtRel(relDiff(r.logLik, ref?.logLik))} | ${r.iterations}${r.converged ? "" : " (not converged)"} |`,
    );
  }
  for (const p of c.peers) {
    if (!p.ok) {
      lines.push(`| ${p.label} | failed: ${p.error} | | | | | | |`);
      continue;
    }
    const ratio = c.ours.ok ? (c.ours.median / p.median!).toFixed(2) : "-";
    lines.push(
      `| ${p.label}${p.reference ? " (reference)" : ""} | ${fmtS(p.median)} | ${p.times!.map((t) => t.toFixed(3)).join(", ")}${p.coldFirst ? " (cold)" : ""} | ${p.cpu ? cpuWall({ times: p.times!, cpu: p.cpu }) : "-"} | ${ratio} | ${p.logLik?.toFixed(6)} | ${p.reference ? "-" : fmtRel(relDiff(p.logLik, ref?.logLik))} | ${p.iterations ?? "-"}${p.converged === false ? " (not converged)" : ""} |`,
    );
  }
  const warned = c.peers.filter((p) => p.ok && p.warnings && p.warnings.length > 0);
  for (const p of warned) lines.push("", `${p.label} warned: ${p.warnings!.map((w) => `"${w}"`).join("; ")}`);
  if (c.ours.ok && c.ours.diagnostics && c.ours.diagnostics.length) lines.push("", `Oddsmith diagnostics: ${c.ours.diagnostics.join(", ")}`);
  if (c.ours.ok && c.ours.rowsUsed !== undefined && c.ours.rowsUsed !== c.rows) lines.push("", `WARNING: our fit used ${c.ours.rowsUsed} of ${c.rows} rows, so this is not a like-for-like comparison.`);
  if (c.skipped && c.skipped.length) lines.push("", `Left out of this case to bound the run time: ${c.skipped.join(", ")} (timed at the smaller sizes).`);
  lines.push("");
  return lines;
}

function renderMarkdown(r: RunRecord, history: RunRecord[], notes: string): string {
  const L: string[] = [];
  L.push("# Oddsmith speed benchmark: results", "");
  L.push(
    "Generated by `npm run bench` (bench/run.ts); method and how to reproduce in bench/README.md. Everything above",
    "the line \"Notes (kept by hand)\" is rewritten on every full run; the notes below it are kept.",
    "",
  );
  L.push(`## Latest run: ${r.date}${r.quick ? " (quick)" : ""}`, "");
  L.push(
    `- Machine: ${r.machine.nproc} cores (${r.machine.cpu}), ${r.machine.memoryGB.toFixed(1)} GB memory, ${r.machine.os}; shared with other jobs.`,
    `- Load: \`${r.uptimeStart}\` at the start, \`${r.uptimeEnd}\` at the end (${r.seconds.toFixed(0)} s run).`,
    `- Versions: ${Object.entries(r.versions)
      .map(([k, v]) => `${k} ${v ?? "missing"}`)
      .join(", ")}.`,
    `- Commit: ${r.commit}.`,
    `- Our kernels: ${r.kernels ?? "JavaScript only"}.`,
    `- Peers missing: ${r.peersMissing.length ? r.peersMissing.join("; ") : "none"}.`,
    "- Python and R here use Debian's reference BLAS/LAPACK (single-threaded, unoptimized); with OpenBLAS or MKL the matrix-heavy peers (statsmodels, glm.fit, newton-cholesky) would be faster. Oddsmith is JavaScript (plus small WebAssembly SIMD kernels for sums over row blocks) on one thread (V8's garbage collector uses helper threads).",
    "",
  );
  L.push("### Targets", "", "| target | goal | measured | status |", "|---|---|---|---|");
  for (const t of r.targets) L.push(`| ${t.name} | ${t.goal} | ${t.measured} | **${t.status}** |`);
  L.push("");
  L.push("### Engine fits against peers", "");
  L.push(
    "Median wall-clock seconds of the fit alone. \"cold\": the fit took over 2 s, so its first (warm-up) run was counted; \"cpu/wall\" below 1 means the process waited for a core. The logLik reference (marked) is statsmodels' Newton fit, or R's glm.fit (IRLS) where statsmodels was left out.",
    "",
  );
  for (const c of r.cases) L.push(...caseTable(c));
  for (const c of r.cells) {
    L.push(`### Cell-function path, ${c.form} (ODDS.FIT adapter: raw 2-D array in, spilled table out)`, "");
    L.push(`Size rule: ${c.rule}.`, "");
    if (c.ok) {
      L.push(
        `Largest in-limit size: ${c.rows.toLocaleString("en-US")} rows of ${c.dataset} (${c.cols} predictor columns + a label column; inputs ${mbs(c.inputBytes)}, output ${c.outputBytes.toLocaleString("en-US")} bytes); ${c.guardAccepts ? "the add-in's own payload guard accepts it" : "the size was lowered to what the add-in's own (more conservative) payload guard accepts"}.`,
        `Load before / after: ${c.loadBefore} / ${c.loadAfter}`,
        "",
        "| measurement | median | runs (s) |",
        "|---|---|---|",
        `| whole call, fit cache cleared (first calculation or an edit) | ${fmtS(c.whole!.median)} | ${c.whole!.times.map((t) => t.toFixed(4)).join(", ")}${c.whole!.coldFirst ? " (cold)" : ""} |`,
        `| whole call, fit cached (recalculation, unchanged data) | ${fmtS(c.cached!.median)} | ${c.cached!.times.map((t) => t.toFixed(4)).join(", ")} |`,
        `| engine fit alone on the same rows (fitBinaryModel on the expanded design) | ${fmtS(c.engine!.median)} | ${c.engine!.times.map((t) => t.toFixed(4)).join(", ")}${c.engine!.coldFirst ? " (cold)" : ""} |`,
        `| overhead = (whole - engine) / whole | ${(c.overhead! * 100).toFixed(1)}% | |`,
        "",
      );
    } else L.push(`Not measured: ${c.error}`, "");
  }
  if (r.boundary) {
    const b = r.boundary;
    L.push(`### Borderline rows at ${b.rows.toLocaleString("en-US")} rows (threshold 0.5, band 0.05)`, "");
    if (b.ok) {
      L.push(
        `Scoring: ${b.predictSource}. ${b.qualified!.toLocaleString("en-US")} rows qualify, ${b.listed} listed. Load before / after: ${b.loadBefore} / ${b.loadAfter}`,
        "",
        "| measurement | median | runs (s) |",
        "|---|---|---|",
        `| nearBoundaryRows on a ready prediction | ${fmtS(b.select!.median)} | ${b.select!.times.map((t) => t.toFixed(4)).join(", ")} |`,
        `| scoring the rows + nearBoundaryRows | ${fmtS(b.predictAndSelect!.median)} | ${b.predictAndSelect!.times.map((t) => t.toFixed(4)).join(", ")} |`,
        "",
      );
    } else L.push(`Not measured: ${b.error}`, "");
  }
  if (r.memory) {
    const m = r.memory;
    L.push(`### Peak memory around the ${m.rows.toLocaleString("en-US")} x ${m.cols} binary fit (fresh process)`, "");
    if (m.ok) {
      L.push(
        "| quantity | value |",
        "|---|---|",
        `| raw data n x d x 8 bytes | ${mbs(m.rawBytes)} |`,
        `| process RSS before loading data (Node + tsx + engine modules) | ${mbs(m.rssRuntime!)} |`,
        `| RSS after loading data | ${mbs(m.rssAfterLoad!)} |`,
        `| peak RSS (getrusage maxrss) after the fit | ${mbs(m.peakRss!)} |`,
        `| data + fit = peak RSS - runtime RSS | ${mbs(m.dataAndFit!)} = ${(m.dataAndFit! / m.rawBytes).toFixed(2)} x raw |`,
        `| fit's own extra = peak RSS - RSS after loading | ${mbs(m.fitExtra!)} = ${(m.fitExtra! / m.rawBytes).toFixed(2)} x raw |`,
        `| V8 heap used before / after the fit (after a GC) | ${mbs(m.heapBefore!)} / ${mbs(m.heapAfter!)} |`,
        `| typed-array (ArrayBuffer) memory before the fit / after it, after a GC, with the fit result alive | ${mbs(m.arrayBuffersBefore!)} / ${mbs(m.arrayBuffersAfter!)} |`,
        `| fit time in that process (single cold run) | ${fmtS(m.seconds)} |`,
        "",
      );
    } else L.push(`Not measured: ${m.error}`, "");
  }
  if (history.length > 0) {
    L.push("## Earlier runs (same harness; load noted per run)", "");
    L.push("| date | load at start | commit | ours / sklearn lbfgs at 100k | at 1M | multi-class | one-hot vs fastest sklearn | cell overhead | borderline |", "|---|---|---|---|---|---|---|---|---|");
    for (const h of history) {
      const tv = (prefix: string) => h.targets.find((t) => t.name.startsWith(prefix));
      const cellOf = (prefix: string) => {
        const t = tv(prefix);
        if (!t) return "-";
        const m = /ratio ([0-9.]+)|overhead (-?[0-9.]+%)|^selection ([0-9.]+ m?s)/.exec(t.measured);
        return `${m ? (m[1] ?? m[2] ?? m[3]) : t.status} (${t.status})`;
      };
      L.push(
        `| ${h.date} | \`${h.uptimeStart.replace(/.*load average: /, "")}\` | ${h.commit.split(" ")[0]}${h.commit.includes(" ") ? " (+ uncommitted)" : ""} | ${cellOf("Binary 100,000")} | ${cellOf("Binary 1,000,000")} | ${cellOf("Multi-class")} | ${cellOf("One-hot")} | ${cellOf("Cell-function")} | ${cellOf("Borderline")} |`,
      );
    }
    L.push("");
  }
  L.push("## Notes (kept by hand)", "", notes.trim() || "_none yet_", "");
  return L.join("\n");
}

// ---- main -------------------------------------------------------------------------------------

function log(s: string): void {
  process.stdout.write(s + "\n");
}

function sh(cmd: string, args: string[]): string {
  try {
    return execFileSync(cmd, args, { encoding: "utf8", stdio: ["ignore", "pipe", "ignore"] }).trim();
  } catch {
    return "";
  }
}

/** HEAD, plus a note when the engine files measured differ from it (others may be mid-edit). */
function commitDescription(): string {
  const head = sh("git", ["-C", ROOT, "rev-parse", "--short", "HEAD"]) || "unknown";
  const dirty = sh("git", ["-C", ROOT, "status", "--porcelain", "--", "src"]).split("\n").filter((l) => l.trim()).length;
  return dirty ? `${head} plus uncommitted changes in ${dirty} file(s) under src/ (the working tree is what was measured)` : head;
}

function main(): void {
  if (argv[0] === "--memory-child") {
    memoryChild(argv[1]);
    return;
  }
  const started = Date.now();
  const uptimeStart = sh("uptime", []);
  log(`Oddsmith speed benchmark (${QUICK ? "quick" : "full"}) ${new Date().toISOString()}\n${uptimeStart}\nkernels: ${KERNELS}`);
  const written = ensureData({ quick: QUICK });
  if (written.length) log(`generated ${written.join(", ")} into ${DATA_DIR}`);
  const avail = NO_PEERS ? null : checkPeers();
  if (avail?.notes.length) log(`peers missing: ${avail.notes.join("; ")}`);

  const cases: CaseResult[] = [];
  const pol = (warmup: number, runs: number, budget: number): RunPolicy => ({ warmup, runs, budget });
  const plans: { id: string; title: string; plan: Plan }[] = QUICK
    ? [
        { id: "binary_10k", title: "Binary 10,000 x 20", plan: { ours: pol(2, 5, 5), peer: pol(1, 3, 5), allSolvers: true } },
        { id: "multi_10k", title: "Multi-class 10,000 x 20 x 5", plan: { ours: pol(1, 3, 5), peer: pol(1, 3, 5), allSolvers: false } },
        { id: "onehot_10k", title: "One-hot-heavy 10,000 rows", plan: { ours: pol(1, 3, 5), peer: pol(1, 3, 5), allSolvers: true } },
      ]
    : [
        { id: "binary_10k", title: "Binary 10,000 x 20", plan: { ours: pol(3, 9, 10), peer: pol(1, 7, 10), allSolvers: true, kernels: pol(2, 5, 5) } },
        { id: "binary_100k", title: "Binary 100,000 x 20", plan: { ours: pol(2, 7, 15), peer: pol(1, 7, 15), allSolvers: true, kernels: pol(1, 5, 8) } },
        { id: "binary_1m", title: "Binary 1,000,000 x 20", plan: { ours: pol(1, 3, 20), peer: pol(1, 3, 20), referencePeer: pol(1, 2, 12), allSolvers: true, skip: ["sklearn newton-cg", "R glm.fit (IRLS)"], kernels: pol(1, 2, 12) } },
        { id: "multi_100k", title: "Multi-class 100,000 x 20 x 5", plan: { ours: pol(1, 5, 15), peer: pol(1, 5, 15), referencePeer: pol(1, 2, 12), slowPeer: pol(1, 1, 1), allSolvers: true, kernels: pol(1, 3, 12) } },
        { id: "onehot_100k", title: "One-hot-heavy 100,000 rows (3 text x 50 levels + 5 numeric = 152 columns)", plan: { ours: pol(1, 3, 15), peer: pol(1, 2, 15), allSolvers: true, skip: ["statsmodels Logit newton"], referenceLabel: "R glm.fit (IRLS)" } },
      ];
  for (const { id, title, plan } of plans) {
    if (!wants(id)) continue;
    log(`\n${title} [load ${loadNow()}]`);
    try {
      cases.push(fitCase(id, title, loadDataSet(id), plan, avail));
    } catch (e) {
      log(`  case failed: ${(e as Error).message.split("\n")[0]}`);
    }
  }

  const cells: CellResultInfo[] = [];
  if (wants("cell")) {
    const sets = QUICK ? ["binary_10k", "onehot_10k"] : ["binary_100k", "onehot_100k"];
    for (const name of sets) {
      log(`\nCell-function path, ${name} [load ${loadNow()}]`);
      let cell: CellResultInfo;
      try {
        cell = cellCase(loadDataSet(name), QUICK ? pol(1, 3, 5) : name.startsWith("onehot") ? pol(1, 3, 12) : pol(2, 7, 15));
      } catch (e) {
        const form = name.startsWith("onehot") ? "text categories + numbers" : "numbers";
        cell = { ok: false, dataset: name, form, rule: "", rows: 0, cols: 0, inputBytes: 0, outputBytes: 0, loadBefore: "", loadAfter: loadNow(), error: `threw: ${(e as Error).message.split("\n")[0]}` };
      }
      cells.push(cell);
      log(
        cell.ok
          ? `  ${cell.rows} rows: whole ${fmtS(cell.whole!.median)}, cached ${fmtS(cell.cached!.median)}, engine ${fmtS(cell.engine!.median)}, overhead ${(cell.overhead! * 100).toFixed(1)}%`
          : `  not measured: ${cell.error}`,
      );
    }
  }
  let boundary: BoundaryInfo | null = null;
  if (wants("boundary")) {
    log(`\nBorderline rows [load ${loadNow()}]`);
    boundary = boundaryCase(loadDataSet(QUICK ? "binary_10k" : "binary_1m"), QUICK ? pol(1, 3, 5) : pol(2, 7, 10));
    log(boundary.ok ? `  select ${fmtS(boundary.select!.median)}, score+select ${fmtS(boundary.predictAndSelect!.median)} (${boundary.predictSource})` : `  not measured: ${boundary.error}`);
  }
  let memory: MemoryInfo | null = null;
  if (wants("memory")) {
    log(`\nPeak memory [load ${loadNow()}]`);
    const name = QUICK ? "binary_10k" : "binary_1m";
    const meta = loadDataSet(name).meta;
    memory = memoryCase(name, meta.rows, meta.cols);
    log(memory.ok ? `  data+fit ${mbs(memory.dataAndFit!)} = ${(memory.dataAndFit! / memory.rawBytes).toFixed(2)} x raw; fit extra ${mbs(memory.fitExtra!)}; process peak ${mbs(memory.peakRss!)}` : `  not measured: ${memory.error}`);
  }

  let firth: FirthLimitInfo | null = null;
  if (wants("firth")) {
    log(`\nFirth at its work limit [load ${loadNow()}]`);
    firth = firthLimitCase(QUICK ? 1 : 3);
    log(firth.ok ? `  ${firth.rows} rows x ${firth.terms} terms: median ${fmtS(firth.median)}` : `  not measured: ${firth.error}`);
  }

  const cpus = os.cpus();
  const record: RunRecord = {
    date: new Date().toISOString().replace(/\.\d+Z$/, "Z"),
    quick: QUICK,
    machine: { nproc: cpus.length, memoryGB: os.totalmem() / 1e9, cpu: cpus[0]?.model.trim() ?? "unknown", os: `${os.type()} ${os.release()}` },
    versions: {
      node: process.version,
      python: avail?.pythonVersion ?? null,
      numpy: avail?.numpy ?? null,
      "scikit-learn": avail?.sklearn ?? null,
      statsmodels: avail?.statsmodels ?? null,
      R: avail?.r ?? null,
      nnet: avail?.nnet ?? null,
    },
    kernels: KERNELS,
    peersMissing: NO_PEERS ? ["peers skipped (--no-peers)"] : avail!.notes,
    uptimeStart,
    uptimeEnd: sh("uptime", []),
    seconds: (Date.now() - started) / 1000,
    cases,
    cells,
    boundary,
    memory,
    firth,
    targets: [],
    commit: commitDescription(),
  };
  record.targets = evaluateTargets(record);
  log("\nTargets:");
  for (const t of record.targets) log(`  [${t.status}] ${t.name}: ${t.measured}`);
  log(`\n${record.uptimeEnd}\ntotal ${record.seconds.toFixed(0)} s`);

  fs.writeFileSync(path.join(DATA_DIR, QUICK ? "last-quick.json" : "last-run.json"), JSON.stringify(record, null, 1));
  if (WRITE) {
    const runsDir = path.join(__dirname, "runs");
    fs.mkdirSync(runsDir, { recursive: true });
    const history = fs
      .readdirSync(runsDir)
      .filter((f) => f.endsWith(".json"))
      .sort()
      .map((f) => JSON.parse(fs.readFileSync(path.join(runsDir, f), "utf8")) as RunRecord)
      .filter((h) => !h.quick);
    fs.writeFileSync(path.join(runsDir, `${record.date.replace(/:/g, "")}.json`), JSON.stringify(record, (k, v) => (k === "cpu" ? undefined : v)) + "\n");
    const resultsFile = path.join(__dirname, "RESULTS.md");
    const old = fs.existsSync(resultsFile) ? fs.readFileSync(resultsFile, "utf8") : "";
    const marker = "## Notes (kept by hand)";
    const notes = old.includes(marker) ? old.slice(old.indexOf(marker) + marker.length) : "";
    fs.writeFileSync(resultsFile, renderMarkdown(record, history.reverse(), notes));
    log(`wrote ${path.relative(ROOT, resultsFile)} and bench/runs/${record.date.replace(/:/g, "")}.json`);
  }
}

main();
