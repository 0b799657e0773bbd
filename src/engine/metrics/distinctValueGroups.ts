/**
 * Collapse (label, prediction, weight) rows into one record per distinct prediction value, in
 * ascending order. Internal to src/engine/metrics: the ROC AUC, the ROC curve and the calibration
 * table all work on these tie groups, which is how ties get mid-ranks (AUC) and stay together
 * (calibration groups).
 *
 * Method, O(n log n) without an index permutation: copy the predictions of rows with positive weight
 * into a Float64Array and sort it natively, keep the distinct values, then place every row in its
 * group by binary search. (A comparator sort of row indices was about 8x slower at 1,000,000 rows.)
 * Rows of weight zero are left out entirely, so they create no group and no ROC point.
 */

/** Per distinct prediction value (ascending): weights of positive and negative rows and the row count. */
export interface DistinctValueGroups {
  values: Float64Array;
  positiveWeight: Float64Array;
  negativeWeight: Float64Array;
  rowCount: Float64Array;
}

/**
 * Group rows by distinct prediction value. Inputs must already be validated (no NaN, labels 0/1).
 * @param labels - 0/1 labels
 * @param predictions - probabilities or scores (no NaN)
 * @param weights - case weights (>= 0) or null for all 1
 * @example distinctValueGroups(new Float64Array([1, 0, 1]), new Float64Array([.8, .3, .8]), null)
 *   // values [.3, .8], positiveWeight [0, 2], negativeWeight [1, 0], rowCount [1, 2]
 */
export function distinctValueGroups(
  labels: Float64Array,
  predictions: Float64Array,
  weights: Float64Array | null | undefined,
): DistinctValueGroups {
  const n = labels.length;
  let used = 0;
  const sorted = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    if (weights && !(weights[i] > 0)) continue;
    sorted[used++] = predictions[i];
  }
  const keys = sorted.subarray(0, used).sort();
  let m = 0;
  for (let i = 0; i < used; i++) {
    // -0 and +0 compare equal and are merged into one group
    if (m === 0 || keys[i] !== keys[m - 1]) keys[m++] = keys[i];
  }
  const values = Float64Array.from(keys.subarray(0, m));
  const positiveWeight = new Float64Array(m);
  const negativeWeight = new Float64Array(m);
  const rowCount = new Float64Array(m);
  for (let i = 0; i < n; i++) {
    const w = weights ? weights[i] : 1;
    if (!(w > 0)) continue;
    const v = predictions[i];
    let lo = 0;
    let hi = m - 1;
    while (lo < hi) {
      const mid = (lo + hi) >>> 1;
      if (values[mid] < v) lo = mid + 1;
      else hi = mid;
    }
    if (labels[i] === 1) positiveWeight[lo] += w;
    else negativeWeight[lo] += w;
    rowCount[lo] += 1;
  }
  return { values, positiveWeight, negativeWeight, rowCount };
}
