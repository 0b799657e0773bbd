/**
 * Seeded k-means (Lloyd's algorithm) with k-means++ starting centres, used to place radial-basis
 * centres in several columns. Deterministic: same data, k and seed give the same centres.
 *
 * Policies: distances are squared Euclidean; a point equidistant from two centres joins the one
 * listed first; a centre that loses all its points stays where it was; iteration stops when no
 * assignment changes or after `maxIterations`. If the data has fewer distinct points than k, fewer
 * centres are returned (k-means++ cannot pick a point at distance 0).
 * References: Lloyd (1982), "Least squares quantization in PCM", IEEE Trans. Inf. Theory 28:129-137;
 * Arthur & Vassilvitskii (2007), "k-means++: the advantages of careful seeding", SODA, 1027-1035.
 */
import { seededUniform } from "./prng";

/** Result of {@link kMeans}. */
export interface KMeansResult {
  /** Centres, each a point of the same dimension as the data. */
  centres: number[][];
  /** Index of the centre of each point. */
  assignment: Int32Array;
  iterations: number;
  converged: boolean;
}

/**
 * Cluster `points` (rows, no NaN) into at most k groups.
 * @example kMeans([[0], [0.1], [10], [10.2]], 2, 1).centres // [[0.05], [10.1]] in some order
 */
export function kMeans(points: readonly number[][], k: number, seed: number, maxIterations = 100): KMeansResult {
  const n = points.length;
  const u = seededUniform(seed);
  if (n === 0) return { centres: [], assignment: new Int32Array(0), iterations: 0, converged: true };
  const dim = points[0].length;
  // Flat storage: point i occupies x[i*dim .. i*dim+dim-1]; the hot loops below stay allocation-free.
  const x = new Float64Array(n * dim);
  points.forEach((p, i) => x.set(p, i * dim));
  const c = new Float64Array(k * dim);
  const d2p = (i: number, j: number) => {
    let s = 0;
    for (let t = 0; t < dim; t++) {
      const d = x[i * dim + t] - c[j * dim + t];
      s += d * d;
    }
    return s;
  };
  // k-means++: first centre uniform; each next one with probability proportional to D(x)^2.
  let m = 1;
  const first = Math.min(n - 1, Math.floor(u() * n));
  c.set(x.subarray(first * dim, first * dim + dim), 0);
  const d2 = new Float64Array(n);
  for (let i = 0; i < n; i++) d2[i] = d2p(i, 0);
  while (m < k) {
    let total = 0;
    for (let i = 0; i < n; i++) total += d2[i];
    if (!(total > 0)) break;
    let r = u() * total;
    let pick = n - 1;
    for (let i = 0; i < n; i++) {
      r -= d2[i];
      if (r < 0) {
        pick = i;
        break;
      }
    }
    if (d2[pick] === 0) {
      // Rounding left r >= 0 at the end: take the last point not already at a centre.
      for (let i = n - 1; i >= 0; i--) if (d2[i] > 0) { pick = i; break; }
    }
    c.set(x.subarray(pick * dim, pick * dim + dim), m * dim);
    for (let i = 0; i < n; i++) d2[i] = Math.min(d2[i], d2p(i, m));
    m++;
  }
  const assignment = new Int32Array(n).fill(-1);
  const sums = new Float64Array(m * dim);
  const counts = new Int32Array(m);
  let iterations = 0;
  let converged = false;
  while (iterations < maxIterations) {
    iterations++;
    let changed = false;
    for (let i = 0; i < n; i++) {
      let best = 0;
      let bestD = Infinity;
      for (let j = 0; j < m; j++) {
        const d = d2p(i, j);
        if (d < bestD) {
          bestD = d;
          best = j;
        }
      }
      if (assignment[i] !== best) {
        assignment[i] = best;
        changed = true;
      }
    }
    if (!changed) {
      converged = true;
      break;
    }
    sums.fill(0);
    counts.fill(0);
    for (let i = 0; i < n; i++) {
      const a = assignment[i];
      counts[a]++;
      for (let t = 0; t < dim; t++) sums[a * dim + t] += x[i * dim + t];
    }
    for (let j = 0; j < m; j++) if (counts[j] > 0) for (let t = 0; t < dim; t++) c[j * dim + t] = sums[j * dim + t] / counts[j];
  }
  const centres = Array.from({ length: m }, (_, j) => Array.from(c.subarray(j * dim, j * dim + dim)));
  return { centres, assignment, iterations, converged };
}
