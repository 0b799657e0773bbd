/**
 * The preview workbench: an in-memory workbook holding the invented demo data, shown in a plain
 * sheet view, with =ODDS.* formulas computed by the cell-function registry, and the real task pane
 * beside it working through the in-memory port.
 *
 * URL options: ?runner=worker|inline (force where the pane fits; default picks by size).
 */
import { wasmKernels } from "../engine";
import { mountPane } from "../taskpane/pane";
import { MemoryPort, MemoryWorkbook } from "../taskpane/memoryPort";
import { loadDemo } from "./demo";
import { evaluateFormula } from "./formulas";
import { SheetView } from "./sheetView";

function start(): void {
  const left = document.getElementById("workbook");
  const right = document.getElementById("pane");
  if (!left || !right) return;
  const workbook = new MemoryWorkbook({ evaluator: evaluateFormula });
  const first = loadDemo(workbook);
  // Start with the data table's first cell picked, so "Use selection" takes the whole table.
  workbook.select(first, { top: 1, left: 1, bottom: 1, right: 1 });
  new SheetView(left, workbook);
  const runner = new URLSearchParams(location.search).get("runner");
  const { controller, evaluation } = mountPane(right, new MemoryPort(workbook), {
    workerUrl: "fitworker.js",
    evaluationWorkerUrl: "evalworker.js",
    runner: runner === "worker" || runner === "inline" ? runner : "auto",
  });
  // Handles for the browser tests (read-only use). `kernels` says whether the engine's WebAssembly
  // kernels loaded under this page's Content-Security-Policy (else it runs its JavaScript kernels).
  const kernels = wasmKernels() ? "webassembly" : "javascript";
  (window as unknown as Record<string, unknown>).oddsmithWorkbench = { workbook, controller, evaluation, kernels };
}

start();
