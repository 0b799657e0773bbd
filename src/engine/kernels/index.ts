/**
 * Kernel selection: which implementation of the kernel interface (kernels/types.ts) a fit's design
 * gets. The statistics code (glm/, families/) calls createKernel and then only `pass` and `gram`.
 *
 * Paths, in the order they are chosen:
 * - sparse (kernels/sparse.ts): one equation and at least SPARSE_MIN_ROWS rows with some mostly-zero
 *   columns (text-level indicators);
 * - wasm (kernels/wasmPath.ts): WebAssembly SIMD available (wasmKernels.ts) and every reciprocal
 *   scale finite;
 * - blocks (kernels/blocks.ts): JavaScript, everywhere else;
 * - reference (kernels/reference.ts): plain loops, only when chosen by setKernelChoice (tests).
 *
 * Speed habits of this folder (and only here: glm/ and families/ are written plainly):
 * - Row loops run over blocks of a few hundred rows whose columns stay in cache, in small module
 *   functions (tiles.ts) with tiles of independent sums, never in closures built per call.
 * - Kernels are classes whose fields are all set in the constructor. V8 discards a function's
 *   optimized code when a garbage collection frees an object it was specialized on (a map of an
 *   object that grew property by property, or a closure); objects of one fixed shape keep it. Check
 *   with `node --import tsx --trace-deopt <script>` and look for "weak objects".
 * - Nothing is allocated per row or per block in the passes; buffers live on the kernel.
 * Reference: Golub & Van Loan, Matrix Computations, 4th ed. (2013), sec. 1.5.
 */
import { BlockKernel } from "./blocks";
import { referenceKernel } from "./reference";
import { SPARSE_MIN_ROWS, SparseKernel, sparseRowLists } from "./sparse";
import type { Kernel, KernelDesign } from "./types";
import { reciprocalScalesFinite, WasmKernel } from "./wasmPath";
import { wasmKernels } from "./wasmKernels";

export type { BlockLikelihood, Kernel, KernelDesign, PassOutput, PassWants } from "./types";
export { pairCount, pairIndex } from "./types";
export { SPARSE_MAX_SHARE, SPARSE_MIN_ROWS } from "./sparse";

/** Which kernel createKernel builds: "auto" (the rules above) or one path forced (tests, benchmarks). */
export type KernelChoice = "auto" | "reference" | "blocks" | "wasm" | "sparse";

let choice: KernelChoice = "auto";

/**
 * Force one kernel path for every fit ("auto" restores the rules above). "wasm" falls back to
 * "blocks" where WebAssembly is unavailable; "sparse" looks for mostly-zero columns at any row count.
 */
export function setKernelChoice(next: KernelChoice): void {
  choice = next;
}

/** The kernel path currently forced ("auto" when none). */
export function kernelChoice(): KernelChoice {
  return choice;
}

/** The dense kernel of a design: WebAssembly when available and usable, else JavaScript blocks. */
function denseKernel(design: KernelDesign, equations: number): Kernel {
  const js = new BlockKernel(design, equations);
  if (choice === "blocks") return js;
  const wasm = wasmKernels();
  return wasm && reciprocalScalesFinite(design) ? new WasmKernel(design, equations, wasm, js) : js;
}

/**
 * The kernel for a design and a number of equations (see the file comment for the rules).
 * Reference: McCullagh & Nelder (1989), ch. 2 (what the passes compute).
 */
export function createKernel(design: KernelDesign, equations: number): Kernel {
  if (choice === "reference") return referenceKernel(design, equations);
  if (equations === 1 && choice !== "blocks" && choice !== "wasm") {
    const lists = sparseRowLists(design.columns, design.rows, choice === "sparse" ? 1 : SPARSE_MIN_ROWS);
    if (lists) return new SparseKernel(design, lists, denseKernel);
  }
  return denseKernel(design, equations);
}
