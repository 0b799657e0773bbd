/**
 * Index of the most probable class of one row; ties go to the LOWEST class index (so the rule does not
 * depend on floating-point noise order). Internal to src/engine/metrics.
 * @example predictedClass([new Float64Array([0.4]), new Float64Array([0.4]), new Float64Array([0.2])], 0) // 0
 */
export function predictedClass(probabilities: readonly Float64Array[], row: number): number {
  let best = 0;
  let bestP = probabilities[0][row];
  for (let k = 1; k < probabilities.length; k++) {
    const p = probabilities[k][row];
    if (p > bestP) {
      best = k;
      bestP = p;
    }
  }
  return best;
}
