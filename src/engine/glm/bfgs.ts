/**
 * The BFGS update of a Hessian approximation, used by the Newton loop's warm start.
 * Reference: Nocedal & Wright, Numerical Optimization, 2nd ed. (2006), eq. 6.19.
 */

/**
 * H <- H - (H s)(H s)' / (s'H s) + y y' / (y's) in place (M x M), for a step s and gradient change y.
 * Skipped unless the curvature y's is clearly positive, so H stays positive definite.
 * Reference: Nocedal & Wright (2006), eq. 6.19.
 */
export function bfgsUpdate(h: Float64Array, s: Float64Array, y: Float64Array): void {
  const M = s.length;
  const hs = new Float64Array(M);
  let ys = 0;
  let shs = 0;
  for (let i = 0; i < M; i++) {
    let v = 0;
    for (let j = 0; j < M; j++) v += h[i * M + j] * s[j];
    hs[i] = v;
    ys += y[i] * s[i];
    shs += s[i] * v;
  }
  if (!(ys > 0 && shs > 0)) return;
  for (let i = 0; i < M; i++) {
    for (let j = i; j < M; j++) {
      const v = h[i * M + j] - (hs[i] * hs[j]) / shs + (y[i] * y[j]) / ys;
      h[i * M + j] = v;
      h[j * M + i] = v;
    }
  }
}
