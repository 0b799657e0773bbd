/**
 * Where the time goes: runs one benchmark fit a few times under V8's CPU profiler and prints the
 * functions with the most self time and the most inclusive time.
 *
 *   npx tsx bench/profile.ts <case> [repetitions]
 *   case: binary_10k | binary_100k | binary_1m | multi_10k | multi_100k | onehot_10k | onehot_100k |
 *         predict_1m (predictBinary on 1,000,000 rows) | cell (ODDS.FIT adapter at 10,000 rows)
 *
 * The profile is taken in-process with the inspector's Profiler domain (no extra flags needed) and
 * written to bench/data/profile-<case>.cpuprofile (open it in Chrome DevTools for the call tree).
 * Function names are reliable; line numbers are those of tsx's transpiled output.
 */
import * as fs from "fs";
import * as inspector from "inspector";
import * as path from "path";
import { performance } from "perf_hooks";
import { DATA_DIR, ensureData, loadDataSet } from "./generate";
import type { CellValue, DesignMatrix, ModelFit } from "../src/engine/types";

interface ProfileNode {
  id: number;
  callFrame: { functionName: string; url: string; lineNumber: number };
  children?: number[];
}
interface Profile {
  nodes: ProfileNode[];
  samples: number[];
  timeDeltas: number[];
}

const ROOT = path.resolve(__dirname, "..");

function post<T>(session: inspector.Session, method: string, params?: object): Promise<T> {
  return new Promise((resolve, reject) =>
    session.post(method, params ?? {}, (err, res) => (err ? reject(err) : resolve(res as T))),
  );
}

function workload(name: string): () => unknown {
  // eslint-disable-next-line @typescript-eslint/no-require-imports
  const req = (f: string) => require(path.join(ROOT, f)) as Record<string, (...a: unknown[]) => unknown>;
  if (name === "cell") {
    const ds = loadDataSet("binary_10k");
    const labels: CellValue[][] = [["y"], ...Array.from(ds.y!, (v) => [v])];
    const predictors: CellValue[][] = [ds.meta.names, ...Array.from({ length: ds.meta.rows }, (_, i) => ds.columns.map((c) => c[i]))];
    const reg = require(path.join(ROOT, "src/functions/registry")) as { CELL_FUNCTIONS: { name: string; adapter: (...a: unknown[]) => unknown }[] };
    const mc = require(path.join(ROOT, "src/shared/fitService")) as { modelCache: () => { clear(): void } };
    const fit = reg.CELL_FUNCTIONS.find((f) => f.name === "FIT")!.adapter;
    return () => {
      mc.modelCache().clear();
      return fit(labels, predictors, null);
    };
  }
  const dsName = name === "predict_1m" ? "binary_1m" : name;
  const ds = loadDataSet(dsName);
  const X: DesignMatrix = { rows: ds.meta.rows, columns: ds.columns, names: ds.meta.names };
  if (name === "predict_1m") {
    const fit = req("src/engine/binary").fitBinaryModel(X, ds.y) as ModelFit;
    const predict = req("src/engine/predictBinary").predictBinary;
    return () => predict(fit, X, { threshold: 0.5 });
  }
  if (ds.meta.kind === "binary") {
    const f = req("src/engine/binary").fitBinaryModel;
    return () => f(X, ds.y);
  }
  const f = req("src/engine/multiclass").fitMulticlassModel;
  return () => f(X, ds.classIndex, ds.meta.classes);
}

function summarize(p: Profile, top: number): string[] {
  const byId = new Map(p.nodes.map((n) => [n.id, n]));
  const parent = new Map<number, number>();
  for (const n of p.nodes) for (const c of n.children ?? []) parent.set(c, n.id);
  const key = (n: ProfileNode) => `${n.callFrame.functionName || "(anonymous)"} (${path.basename(n.callFrame.url) || "native"})`;
  const self = new Map<string, number>();
  const incl = new Map<string, number>();
  let total = 0;
  p.samples.forEach((s, i) => {
    const dt = p.timeDeltas[i] ?? 0;
    total += dt;
    const node = byId.get(s)!;
    self.set(key(node), (self.get(key(node)) ?? 0) + dt);
    const seen = new Set<string>();
    for (let id: number | undefined = s; id !== undefined; id = parent.get(id)) {
      const k = key(byId.get(id)!);
      if (!seen.has(k)) {
        seen.add(k);
        incl.set(k, (incl.get(k) ?? 0) + dt);
      }
    }
  });
  const fmt = (m: Map<string, number>) =>
    [...m.entries()]
      .filter(([k]) => !/^\((root|program|idle)\)/.test(k))
      .sort((a, b) => b[1] - a[1])
      .slice(0, top)
      .map(([k, v]) => `  ${(v / 1000).toFixed(1).padStart(8)} ms ${((100 * v) / total).toFixed(1).padStart(5)}%  ${k}`);
  return [`profiled ${(total / 1000).toFixed(0)} ms`, "self time:", ...fmt(self), "inclusive time (engine frames):", ...fmt(new Map([...incl].filter(([k]) => /\.ts\)$/.test(k) && !/profile\.ts/.test(k))))];
}

async function main(): Promise<void> {
  const name = process.argv[2] ?? "binary_100k";
  const reps = Number(process.argv[3] ?? 3);
  ensureData({});
  const work = workload(name);
  work(); // warm-up outside the profile
  const session = new inspector.Session();
  session.connect();
  await post(session, "Profiler.enable");
  await post(session, "Profiler.setSamplingInterval", { interval: 200 });
  await post(session, "Profiler.start");
  const times: number[] = [];
  for (let r = 0; r < reps; r++) {
    const t0 = performance.now();
    work();
    times.push(performance.now() - t0);
  }
  const { profile } = await post<{ profile: Profile }>(session, "Profiler.stop");
  session.disconnect();
  const out = path.join(DATA_DIR, `profile-${name}.cpuprofile`);
  fs.writeFileSync(out, JSON.stringify(profile));
  process.stdout.write(`${name}: ${times.map((t) => t.toFixed(0)).join(", ")} ms per run\n${summarize(profile, 15).join("\n")}\nwrote ${path.relative(ROOT, out)}\n`);
}

void main();
