/**
 * Numerically stable scalar helpers shared by the binary and multi-class engines.
 *
 * Why this file exists: log(sigmoid(x)) computed directly gives log(0) = -Infinity once |x| passes
 * about 37 (or 745 for exp underflow), and a softmax without subtracting the maximum overflows.
 * Every function below is written so that it never forms an intermediate that can overflow.
 * Method reference: M. Mächler, "Accurately Computing log(1 - exp(-|a|))", CRAN Rmpfr vignette
 * (2012), section on log1pexp; and the standard log-sum-exp shift (e.g. Blanchard, Higham & Higham,
 * "Accurately computing the log-sum-exp and softmax functions", IMA J. Numer. Anal. 41 (2021)).
 */

/**
 * Logistic sigmoid 1 / (1 + exp(-x)), stable for any finite x.
 * @param x - linear predictor (log-odds)
 * @returns probability in [0, 1]
 * @example sigmoid(0) // 0.5
 */
export function sigmoid(x: number): number {
  if (x >= 0) {
    return 1 / (1 + Math.exp(-x));
  }
  const e = Math.exp(x);
  return e / (1 + e);
}

/**
 * log(1 + exp(x)) without overflow or loss of precision (Mächler 2012, thresholds -37, 18, 33.3).
 * @param x - any real number
 * @returns log(1 + e^x) >= 0
 * @example log1pExp(0) // Math.LN2
 */
export function log1pExp(x: number): number {
  if (x <= -37) return Math.exp(x);
  if (x <= 18) return Math.log1p(Math.exp(x));
  if (x <= 33.3) return x + Math.exp(-x);
  return x;
}

/**
 * Softplus function, softplus(x) = log(1 + exp(x)); an alias of {@link log1pExp} under its ML name.
 * @example softplus(-1000) // 0 (well, 0 to double precision: exp(-1000) underflows to 0)
 */
export function softplus(x: number): number {
  return log1pExp(x);
}

/**
 * log(sigmoid(x)) = -log(1 + exp(-x)), finite for every finite x (it is about x for very negative x).
 * @example logSigmoid(-800) // -800
 */
export function logSigmoid(x: number): number {
  return -log1pExp(-x);
}

/**
 * Logit (log-odds) of a probability, log(p / (1 - p)); -Infinity at 0, +Infinity at 1, NaN outside.
 * @example logit(0.5) // 0
 */
export function logit(p: number): number {
  if (!(p >= 0 && p <= 1)) return NaN;
  return Math.log(p) - Math.log1p(-p);
}

/**
 * log(sum_i exp(values[i])) over values[start..end), shifted by the maximum so nothing overflows.
 * Returns -Infinity for an empty slice or when every value is -Infinity; NaN if any value is NaN.
 * @param values - array of log-scale numbers
 * @param start - first index (inclusive) [0]
 * @param end - last index (exclusive) [values.length]
 * @example logSumExp([1000, 1000]) // 1000 + Math.LN2
 */
export function logSumExp(values: ArrayLike<number>, start = 0, end = values.length): number {
  let max = -Infinity;
  for (let i = start; i < end; i++) {
    const v = values[i];
    if (v !== v) return NaN;
    if (v > max) max = v;
  }
  if (max === -Infinity) return -Infinity;
  if (max === Infinity) return Infinity;
  let sum = 0;
  for (let i = start; i < end; i++) sum += Math.exp(values[i] - max);
  return max + Math.log(sum);
}

/** Default floor of {@link clippedLog}: the probability clip many log-loss implementations use. */
export const DEFAULT_LOG_CLIP = 1e-15;

/**
 * Natural log of a probability clipped to [eps, 1 - eps] first, so log-loss stays finite when a
 * model says 0 or 1. NaN stays NaN.
 * @param p - probability
 * @param eps - clip width [1e-15]
 * @example clippedLog(0) // Math.log(1e-15)
 */
export function clippedLog(p: number, eps = DEFAULT_LOG_CLIP): number {
  if (p !== p) return NaN;
  const q = p < eps ? eps : p > 1 - eps ? 1 - eps : p;
  return Math.log(q);
}

/**
 * Natural log of Gamma(x) for x > 0: Stirling's asymptotic series (Abramowitz & Stegun 6.1.41)
 * evaluated at x + k >= 15 and shifted back with the recurrence Gamma(x + 1) = x Gamma(x)
 * (A&S 6.1.15). Relative accuracy about 1e-15 away from the zeros at 1 and 2, where the absolute
 * error is about 1e-15. Returns NaN for x <= 0 or NaN.
 * @example logGamma(5) // Math.log(24)
 */
export function logGamma(x: number): number {
  if (!(x > 0)) return NaN;
  if (x === Infinity) return Infinity;
  let shift = 0;
  let z = x;
  // Accumulate the product x (x+1) ... (x+k-1) and take one log at the end (rescaled if large).
  let prod = 1;
  while (z < 15) {
    prod *= z;
    z += 1;
    if (prod > 1e280) {
      shift += Math.log(prod);
      prod = 1;
    }
  }
  shift += Math.log(prod);
  const inv = 1 / z;
  const inv2 = inv * inv;
  // Bernoulli-number coefficients B_{2k} / (2k (2k - 1)): 1/12, -1/360, 1/1260, -1/1680, 1/1188.
  const series =
    inv * (1 / 12 + inv2 * (-1 / 360 + inv2 * (1 / 1260 + inv2 * (-1 / 1680 + inv2 * (1 / 1188)))));
  const lg = (z - 0.5) * Math.log(z) - z + 0.5 * Math.log(2 * Math.PI) + series;
  return lg - shift;
}
