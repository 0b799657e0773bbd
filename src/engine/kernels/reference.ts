/**
 * The reference kernel: the sums of kernels/types.ts written as plain loops over whole columns,
 * with no blocking, unrolling or other speed work, so that each line can be checked against the
 * formulas. The fast paths are tested against it (test/unit/engine/kernels/); fits can run on it
 * too (setKernelChoice("reference") in kernels/index.ts).
 * Reference: McCullagh & Nelder (1989), ch. 2 (score and information of a GLM); Böhning (1992)
 * for the multinomial information blocks.
 */
import { pairCount, pairIndex, type BlockLikelihood, type Kernel, type KernelDesign, type PassOutput, type PassWants } from "./types";

/** Fitting column j of the design: (x_j - centre_j) / scale_j, or x_j itself. */
function fittingColumn(design: KernelDesign, j: number): Float64Array {
  const x = design.columns[j];
  const z = new Float64Array(design.rows);
  for (let i = 0; i < design.rows; i++) {
    z[i] = design.centre && design.scale ? (x[i] - design.centre[j]) / design.scale[j] : x[i];
  }
  return z;
}

/** The reference kernel of a design with `equations` equations. */
export function referenceKernel(design: KernelDesign, equations: number): Kernel {
  const n = design.rows;
  const q = design.columns.length;
  const E = equations;
  const M = E * q;
  const z = Array.from({ length: q }, (_, j) => fittingColumn(design, j));
  return {
    name: "reference",
    pass(theta: Float64Array, family: BlockLikelihood, wants: PassWants, out: PassOutput): number {
      // Linear predictors eta_ie = sum_j z_ij theta_ej.
      const eta = new Float64Array(E * n);
      for (let e = 0; e < E; e++) {
        for (let i = 0; i < n; i++) {
          let s = 0;
          for (let j = 0; j < q; j++) s += z[j][i] * theta[e * q + j];
          eta[e * n + i] = s;
        }
      }
      const residual = wants === "value" ? null : new Float64Array(E * n);
      const weights = wants === "information" ? new Float64Array(pairCount(E) * n) : null;
      const logLikelihood = family.block(0, n, eta, residual, weights, n);
      if (residual) {
        // Score: sum_i z_ij dl_i/deta_ie.
        for (let e = 0; e < E; e++) {
          for (let j = 0; j < q; j++) {
            let s = 0;
            for (let i = 0; i < n; i++) s += z[j][i] * residual[e * n + i];
            out.score[e * q + j] = s;
          }
        }
      }
      if (weights) {
        // Information: entry (e q + a, f q + b) = sum_i z_ia z_ib v_ef,i, with v_fe = v_ef.
        for (let e = 0; e < E; e++) {
          for (let f = 0; f < E; f++) {
            const v = pairIndex(Math.min(e, f), Math.max(e, f), E) * n;
            for (let a = 0; a < q; a++) {
              for (let b = 0; b < q; b++) {
                let s = 0;
                for (let i = 0; i < n; i++) s += z[a][i] * z[b][i] * weights[v + i];
                out.information[(e * q + a) * M + f * q + b] = s;
              }
            }
          }
        }
      }
      return logLikelihood;
    },
    gram(w: Float64Array, out: Float64Array): Float64Array {
      for (let a = 0; a < q; a++) {
        for (let b = 0; b < q; b++) {
          let s = 0;
          for (let i = 0; i < n; i++) s += z[a][i] * z[b][i] * w[i];
          out[a * q + b] = s;
        }
      }
      return out;
    },
  };
}
