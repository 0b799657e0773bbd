/**
 * Rows near the decision boundary ("borderline rows") of a fitted classifier.
 *
 * Binary models: a row is borderline when its positive-class probability p lies within `band` of
 * the decision threshold, |p - threshold| <= band. Separately, a row is statistically undecided
 * when the confidence interval of its probability (computed on the logit scale by the scorer)
 * contains the threshold: the data cannot tell on which side the row belongs, whatever its
 * distance in probability. Both kinds are listed; each row says which test(s) it meets.
 *
 * Multi-class models: a row is borderline when the gap between its two most likely classes is at
 * most `band`. There is no threshold and no interval test for several classes.
 *
 * Closeness is the margin: |p - threshold| (binary) or the top-two gap (multi-class). The list is
 * sorted by margin, ties by row order, and holds at most `limit` rows; the counts always cover all
 * rows, so a capped list still tells how many rows qualified.
 *
 * Method: the idea of reviewing cases near the cut-off is the "grey zone" / indeterminate-range
 * approach of diagnostic testing (Coste & Pouchot, "A grey zone for quantitative diagnostic and
 * screening tests", Int. J. Epidemiol. 32 (2003) 304-313); the top-two gap for several classes is
 * the "margin" used in margin-based uncertainty sampling (Scheffer, Decomain & Wrobel, "Active
 * hidden Markov models for information extraction", IDA 2001). Selection of the `limit` closest
 * rows uses Hoare's quickselect (Hoare, "Algorithm 65: Find", CACM 4 (1961) 321).
 *
 * Performance: one pass over the rows into typed arrays of the selected rows, a quickselect over
 * their margins only when more rows qualify than are listed, and objects only for the listed rows.
 * 1,000,000 rows take a few tens of milliseconds (see test/unit/engine/boundary.test.ts).
 */
import { problem } from "./messages";
import type { Prediction } from "./types";

/** Default number of rows listed; counts are not capped. */
export const DEFAULT_BOUNDARY_LIMIT = 500;

/** Options of {@link nearBoundaryRows}. */
export interface BoundaryOptions {
  /** Binary decision threshold on the positive-class probability, in (0, 1) [0.5]. Ignored for several classes. */
  threshold?: number;
  /** Half-width of the borderline band: margin <= band selects a row. 0 <= band <= 1. */
  band: number;
  /** Also list rows whose probability interval contains the threshold (binary only) [true]. */
  undecided?: boolean;
  /** Most rows to list (the closest first) [DEFAULT_BOUNDARY_LIMIT]. Counts cover every row. */
  limit?: number;
}

/** One listed row. */
export interface BoundaryRow {
  /** 0-based index into the prediction's rows. */
  row: number;
  /** Binary: positive-class probability. Multi-class: probability of the most likely class. */
  probability: number;
  /** |p - threshold| (binary) or the gap between the two most likely classes (multi-class). */
  margin: number;
  /** Index of the most likely class (binary: 1 when p >= threshold, else 0). */
  predicted: number;
  /** Multi-class: index of the runner-up class. Binary: the other class. */
  runnerUp: number;
  /** True when margin <= band. */
  withinBand: boolean;
  /** Binary: true when the probability interval contains the threshold. Always false for several classes. */
  undecided: boolean;
}

/** Result of {@link nearBoundaryRows}. */
export interface BoundaryReview {
  kind: "binary" | "multiclass";
  threshold: number;
  band: number;
  /** Listed rows, closest first (ties by row), at most `limit`. */
  rows: BoundaryRow[];
  /** Rows that qualify (within the band or undecided); may exceed rows.length. */
  total: number;
  /** Rows with margin <= band. */
  withinBand: number;
  /** Rows whose interval contains the threshold (binary). */
  undecided: number;
  /** Rows undecided but outside the band: the ones the interval test adds. */
  undecidedOnly: number;
  /** Rows with a usable probability. */
  scored: number;
  /** Rows that could not be scored (NaN probability); never listed. */
  unscored: number;
  /** True when more rows qualified than were listed. */
  truncated: boolean;
  /** False when undecided rows were asked for but the prediction has no intervals. */
  intervalsAvailable: boolean;
}

function checkOptions(options: BoundaryOptions): { threshold: number; band: number; limit: number } {
  const threshold = options.threshold ?? 0.5;
  if (!(threshold > 0 && threshold < 1)) {
    throw problem("BAD_OPTION_VALUE", {
      name: "threshold",
      value: threshold,
      expected: "Use a probability strictly between 0 and 1, such as 0.5.",
    });
  }
  const band = options.band;
  if (!(band >= 0 && band <= 1)) {
    throw problem("BAD_OPTION_VALUE", {
      name: "band",
      value: band,
      expected: "Use a width between 0 and 1, such as 0.1 (rows within 0.1 of the threshold).",
    });
  }
  const limit = options.limit ?? DEFAULT_BOUNDARY_LIMIT;
  if (!(Number.isInteger(limit) && limit >= 0)) {
    throw problem("BAD_OPTION_VALUE", {
      name: "limit",
      value: limit,
      expected: "Use a whole number of rows, 0 or more.",
    });
  }
  return { threshold, band, limit };
}

/**
 * List the rows of a prediction that lie near the decision boundary, closest first, with counts.
 *
 * Binary (two classes): margin = |p - threshold| with p the positive-class probability
 * (`probabilities[1]`); a row qualifies when margin <= band, or when `undecided` is on and the
 * interval [lower, upper] of its probability contains the threshold. Multi-class: margin = gap
 * between the two largest class probabilities; a row qualifies when margin <= band. Rows with a
 * NaN probability are counted as unscored and never listed.
 *
 * Reference: grey-zone review around a cut-off (Coste & Pouchot, Int. J. Epidemiol. 2003); top-two
 * margin (Scheffer et al., IDA 2001); quickselect (Hoare, CACM 1961).
 *
 * @param prediction - per-row class probabilities (and, for binary models, optional intervals)
 * @param options - threshold (binary), band, undecided, limit
 * @returns the listed rows and the counts
 * @throws OddsmithError BAD_OPTION_VALUE when threshold, band or limit is out of range
 * @example
 * const p = new Float64Array([0.1, 0.48, 0.9, 0.55]);
 * nearBoundaryRows({ probabilities: [p.map((v) => 1 - v), p], predicted: new Int32Array(4),
 *   margin: new Float64Array(4) }, { band: 0.1 }).rows.map((r) => r.row) // [1, 3]
 */
export function nearBoundaryRows(prediction: Prediction, options: BoundaryOptions): BoundaryReview {
  const { threshold, band, limit } = checkOptions(options);
  const probs = prediction.probabilities;
  const k = probs.length;
  const n = k > 0 ? probs[0].length : 0;
  const binary = k === 2;
  // Selected rows only, in row order: row index, margin and flags (bit 1 = within band,
  // bit 2 = undecided). One pass over the rows fills them; later steps touch only selected rows.
  const selRow = new Int32Array(n);
  const selMargin = new Float64Array(n);
  const selFlag = new Uint8Array(n);
  let withinBand = 0;
  let undecided = 0;
  let undecidedOnly = 0;
  let unscored = 0;
  let selected = 0;
  const wantUndecided = binary && options.undecided !== false;
  const lower = prediction.lower;
  const upper = prediction.upper;
  const intervalsAvailable = !wantUndecided || (lower !== undefined && upper !== undefined);

  if (binary) {
    const p1 = probs[1];
    const useIntervals = wantUndecided && lower !== undefined && upper !== undefined;
    for (let i = 0; i < n; i++) {
      const p = p1[i];
      if (!(p >= 0 && p <= 1)) {
        unscored++;
        continue;
      }
      // No Math.abs in the hot loop: a global lookup per row is slow inside sandboxed contexts.
      const m = p >= threshold ? p - threshold : threshold - p;
      let f = 0;
      if (m <= band) {
        f = 1;
        withinBand++;
      }
      // Edge policy: an interval touching the threshold (lower == threshold) counts as containing it;
      // a NaN interval (no covariance) never does.
      if (useIntervals && lower![i] <= threshold && upper![i] >= threshold) {
        f |= 2;
        undecided++;
        if (f === 2) undecidedOnly++;
      }
      if (f !== 0) {
        selRow[selected] = i;
        selMargin[selected] = m;
        selFlag[selected] = f;
        selected++;
      }
    }
  } else if (k > 0) {
    for (let i = 0; i < n; i++) {
      let best = -1;
      let second = -1;
      let bad = false;
      for (let c = 0; c < k; c++) {
        const v = probs[c][i];
        if (!(v >= 0 && v <= 1)) {
          bad = true;
          break;
        }
        if (v > best) {
          second = best;
          best = v;
        } else if (v > second) {
          second = v;
        }
      }
      if (bad) {
        unscored++;
        continue;
      }
      const m = k === 1 ? best : best - second;
      if (m <= band) {
        selRow[selected] = i;
        selMargin[selected] = m;
        selFlag[selected] = 1;
        withinBand++;
        selected++;
      }
    }
  }

  // Rows to list: all selected rows when they fit, else the `limit` smallest margins.
  let cutoff = Infinity;
  if (selected > limit && limit > 0) cutoff = quickselect(selMargin.slice(0, selected), limit - 1);
  const take = Math.min(selected, limit);
  // Positions (into the selected arrays) of the listed rows.
  const chosen = new Int32Array(take);
  let count = 0;
  if (take > 0) {
    // Strictly below the cutoff, then rows equal to it in row order until the list is full.
    let ties = 0;
    const tied = new Int32Array(take);
    for (let j = 0; j < selected; j++) {
      const m = selMargin[j];
      if (m < cutoff) chosen[count++] = j;
      else if (m === cutoff && ties < take) tied[ties++] = j;
    }
    for (let t = 0; t < ties && count < take; t++) chosen[count++] = tied[t];
  }
  const order = Array.from(chosen.subarray(0, count));
  order.sort((a, b) => selMargin[a] - selMargin[b] || selRow[a] - selRow[b]);

  const rows: BoundaryRow[] = order.map((j) => {
    const i = selRow[j];
    if (binary) {
      const p = probs[1][i];
      const predicted = p >= threshold ? 1 : 0;
      return {
        row: i,
        probability: p,
        margin: selMargin[j],
        predicted,
        runnerUp: 1 - predicted,
        withinBand: (selFlag[j] & 1) !== 0,
        undecided: (selFlag[j] & 2) !== 0,
      };
    }
    let best = 0;
    let second = -1;
    for (let c = 1; c < k; c++) {
      if (probs[c][i] > probs[best][i]) {
        second = best;
        best = c;
      } else if (second < 0 || probs[c][i] > probs[second][i]) {
        second = c;
      }
    }
    return {
      row: i,
      probability: probs[best][i],
      margin: selMargin[j],
      predicted: best,
      runnerUp: second,
      withinBand: true,
      undecided: false,
    };
  });

  return {
    kind: binary ? "binary" : "multiclass",
    threshold: binary ? threshold : NaN,
    band,
    rows,
    total: selected,
    withinBand,
    undecided,
    undecidedOnly,
    scored: n - unscored,
    unscored,
    truncated: selected > rows.length,
    intervalsAvailable,
  };
}

/**
 * The k-th smallest value (0-based) of `a`, reordering `a` in place. Hoare's selection with a
 * median-of-three pivot; expected linear time.
 */
function quickselect(a: Float64Array, k: number): number {
  let lo = 0;
  let hi = a.length - 1;
  while (hi > lo) {
    const mid = (lo + hi) >>> 1;
    // Median of three as pivot, which avoids the quadratic case on sorted input.
    let x = a[lo];
    const y = a[mid];
    const z = a[hi];
    const pivot = x < y ? (y < z ? y : x < z ? z : x) : x < z ? x : y < z ? z : y;
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        x = a[i];
        a[i] = a[j];
        a[j] = x;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else return a[k];
  }
  return a[k];
}
