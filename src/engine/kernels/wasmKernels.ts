/**
 * The WebAssembly kernels of kernels.wat (128-bit SIMD Gram-matrix sums on row blocks), loaded
 * once, with the module's memory managed for the callers. Where WebAssembly or its SIMD
 * instructions are not available (an older engine, or a page whose Content-Security-Policy lacks
 * 'wasm-unsafe-eval'), wasmKernels() returns null and the callers use their JavaScript kernels,
 * which compute the same sums (test/unit/engine/wasmKernels.test.ts checks the two against each
 * other). The module is small (under 2 KB) and compiled synchronously on first use.
 * Reference: WebAssembly Core Specification 2.0 (W3C, 2022), fixed-width SIMD instructions.
 */
import { KERNELS_WASM_BASE64 } from "./kernelsWasm";

/** The kernels; offsets, strides and lengths are in doubles (see kernels.wat for the sums). */
export interface WasmKernels {
  /**
   * The module's memory as doubles, at least `doubles` long (the memory grows as needed; a view
   * taken before a growth is stale afterwards, so take it again after each call). Null when the
   * memory cannot grow that far.
   */
  reserve(doubles: number): Float64Array | null;
  /** out[j*k + l] += sum_{r < len} a_j[r] a_l[r], 3 x 3 tiles with l >= j; k a multiple of 3, len even. */
  gram(a: number, k: number, len: number, stride: number, out: number): void;
  /** out[(a*q + b)*m + k] += sum_{r < len} z_a[r] z_b[r] v_k[r] for a <= b (len even). */
  weightedGrams(z: number, q: number, len: number, v: number, stride: number, m: number, out: number): void;
  /**
   * For each column j < k: with d = x_j[r] - c[j], out[j] += sum_r u[r] d when u is not 0 (u is an
   * offset; 0 means no residual), then x_j[r] = sw[r] d f[j] in place (len even).
   */
  scaleBlock(x: number, k: number, len: number, stride: number, sw: number, c: number, f: number, u: number, out: number): void;
  /** eta_e[r] = sum_j theta[e*q + j] z_j[r] for e < m, r < len (len even; eta_e at eta + e*stride). */
  predictors(z: number, q: number, len: number, stride: number, theta: number, m: number, eta: number): void;
  /** out[k*q + j] += sum_{r < len} z_j[r] u_k[r] for j < q, k < m (len even; u_k at u + k*stride). */
  crossSums(z: number, q: number, len: number, stride: number, u: number, m: number, out: number): void;
}

interface KernelExports {
  memory: WebAssembly.Memory;
  gram(a: number, k: number, len: number, strideBytes: number, out: number): void;
  weightedGrams(z: number, q: number, len: number, v: number, strideBytes: number, m: number, out: number): void;
  scaleBlock(x: number, k: number, len: number, strideBytes: number, sw: number, c: number, f: number, u: number, out: number): void;
  predictors(z: number, q: number, len: number, strideBytes: number, theta: number, m: number, eta: number): void;
  crossSums(z: number, q: number, len: number, strideBytes: number, u: number, m: number, out: number): void;
}

const PAGE_BYTES = 65536;
let loaded: WasmKernels | null | undefined;
let enabled = true;

/** The kernels, or null when this engine cannot run them (the callers then use JavaScript). */
export function wasmKernels(): WasmKernels | null {
  if (!enabled) return null;
  if (loaded === undefined) loaded = load();
  return loaded;
}

/**
 * Use (true, the default) or bypass (false) the WebAssembly kernels; for the tests that compare
 * both paths and for benchmarks.
 */
export function setWasmKernelsEnabled(on: boolean): void {
  enabled = on;
}

function decodeBase64(text: string): Uint8Array<ArrayBuffer> {
  const binary = atob(text);
  const bytes = new Uint8Array(new ArrayBuffer(binary.length));
  for (let i = 0; i < binary.length; i++) bytes[i] = binary.charCodeAt(i);
  return bytes;
}

function load(): WasmKernels | null {
  // Any failure (no WebAssembly, no SIMD: the bytes do not validate; compilation refused by a
  // Content-Security-Policy) leaves the JavaScript kernels in use, which give the same results.
  let ex: KernelExports;
  try {
    if (typeof WebAssembly !== "object" || typeof atob !== "function") return null;
    const bytes = decodeBase64(KERNELS_WASM_BASE64);
    if (!WebAssembly.validate(bytes)) return null;
    ex = new WebAssembly.Instance(new WebAssembly.Module(bytes), {}).exports as unknown as KernelExports;
  } catch {
    return null;
  }
  let view = new Float64Array(ex.memory.buffer);
  return {
    reserve(doubles: number): Float64Array | null {
      const need = doubles * 8;
      if (ex.memory.buffer.byteLength < need) {
        try {
          ex.memory.grow(Math.ceil((need - ex.memory.buffer.byteLength) / PAGE_BYTES));
        } catch {
          return null;
        }
      }
      if (view.buffer !== ex.memory.buffer) view = new Float64Array(ex.memory.buffer);
      return view;
    },
    gram: (a, k, len, stride, out) => ex.gram(a * 8, k, len, stride * 8, out * 8),
    weightedGrams: (z, q, len, v, stride, m, out) => ex.weightedGrams(z * 8, q, len, v * 8, stride * 8, m, out * 8),
    scaleBlock: (x, k, len, stride, sw, c, f, u, out) => ex.scaleBlock(x * 8, k, len, stride * 8, sw * 8, c * 8, f * 8, u * 8, out * 8),
    predictors: (z, q, len, stride, theta, m, eta) => ex.predictors(z * 8, q, len, stride * 8, theta * 8, m, eta * 8),
    crossSums: (z, q, len, stride, u, m, out) => ex.crossSums(z * 8, q, len, stride * 8, u * 8, m, out * 8),
  };
}
