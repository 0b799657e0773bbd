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

function dist2(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let s = 0;
  for (let j = 0; j < a.length; j++) {
    const d = a[j] - b[j];
    s += d * d;
  }
  return s;
}

/**
 * Cluster `points` (rows, no NaN) into at most k groups.
 * @example kMeans([[0], [0.1], [10], [10.2]], 2, 1).centres // [[0.05], [10.1]] in some order
 */
export function kMeans(points: readonly number[][], k: number, seed: number, maxIterations = 100): KMeansResult {
  const n = points.length;
  const u = seededUniform(seed);
  const centres: number[][] = [];
  if (n === 0) return { centres, assignment: new Int32Array(0), iterations: 0, converged: true };
  // k-means++: first centre uniform; each next one with probability proportional to D(x)^2.
  centres.push([...points[Math.min(n - 1, Math.floor(u() * n))]]);
  const d2 = points.map((p) => dist2(p, centres[0]));
  while (centres.length < k) {
    let total = 0;
    for (const v of d2) total += v;
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
    const c = [...points[pick]];
    centres.push(c);
    for (let i = 0; i < n; i++) d2[i] = Math.min(d2[i], dist2(points[i], c));
  }
  const assignment = new Int32Array(n).fill(-1);
  let iterations = 0;
  let converged = false;
  while (iterations < maxIterations) {
    iterations++;
    let changed = false;
    for (let i = 0; i < n; i++) {
      let best = 0;
      let bestD = Infinity;
      centres.forEach((c, j) => {
        const d = dist2(points[i], c);
        if (d < bestD) {
          bestD = d;
          best = j;
        }
      });
      if (assignment[i] !== best) {
        assignment[i] = best;
        changed = true;
      }
    }
    if (!changed) {
      converged = true;
      break;
    }
    const dim = points[0].length;
    const sums = centres.map(() => new Array<number>(dim).fill(0));
    const counts = new Array<number>(centres.length).fill(0);
    for (let i = 0; i < n; i++) {
      counts[assignment[i]]++;
      for (let j = 0; j < dim; j++) sums[assignment[i]][j] += points[i][j];
    }
    centres.forEach((c, j) => {
      if (counts[j] > 0) for (let t = 0; t < dim; t++) c[t] = sums[j][t] / counts[j];
    });
  }
  return { centres, assignment, iterations, converged };
}
