/**
 * A bounded cache of fitted models, keyed by the CONTENT of the inputs.
 *
 * Why: FIT, PROB, CLASS, MARGIN and REPORT over the same ranges would otherwise each refit the same
 * model on every recalculation. The key is a hash of every cell value (with its type) and of the fit
 * options, so any edit, appended row or deleted row gives a new key and a fresh fit: a stale entry can
 * only be returned on a 64-bit hash collision (probability about n^2 / 2^65 for n distinct inputs).
 *
 * Bounds: at most `maxEntries` models and at most `maxCells` input cells summed over the cached
 * entries; the least recently used entry is evicted first. An input larger than `maxCells` is not
 * cached at all.
 *
 * Sharing: the cell functions and the task pane are separate bundles loaded into one shared runtime;
 * each bundle has its own copy of this module, so the one cache instance lives on `globalThis` under a
 * fixed key (see `sharedFitCache`).
 */

/** Defaults: 16 models; 2 million cells (~16 MB of doubles) in total across them. */
export const DEFAULT_MAX_ENTRIES = 16;
export const DEFAULT_MAX_CELLS = 2_000_000;

export interface FitCacheOptions {
  maxEntries?: number;
  maxCells?: number;
}

export interface FitCacheStats {
  hits: number;
  misses: number;
  entries: number;
  cells: number;
}

interface Entry<T> {
  value: T;
  cells: number;
}

/** LRU cache of values keyed by content keys (see `contentKey`). */
export class FitCache<T = unknown> {
  readonly maxEntries: number;
  readonly maxCells: number;
  /** Map iteration order is insertion order: the first key is the least recently used. */
  private readonly entries = new Map<string, Entry<T>>();
  private totalCells = 0;
  private hits = 0;
  private misses = 0;

  constructor(options: FitCacheOptions = {}) {
    this.maxEntries = Math.max(1, Math.floor(options.maxEntries ?? DEFAULT_MAX_ENTRIES));
    this.maxCells = Math.max(1, Math.floor(options.maxCells ?? DEFAULT_MAX_CELLS));
  }

  /** The cached value for `key` (marking it most recently used), or undefined. */
  get(key: string): T | undefined {
    const entry = this.entries.get(key);
    if (!entry) return undefined;
    this.entries.delete(key);
    this.entries.set(key, entry);
    return entry.value;
  }

  /** True when `key` is cached (without marking it used or counting a hit). */
  has(key: string): boolean {
    return this.entries.has(key);
  }

  /** Store `value` under `key`; `cells` is the size of the inputs it was computed from. */
  set(key: string, value: T, cells: number): void {
    this.remove(key);
    if (cells > this.maxCells) return;
    this.entries.set(key, { value, cells });
    this.totalCells += cells;
    this.evict();
  }

  /**
   * The cached value for `key`, or compute it with `create`, cache it and return it. A `create` that
   * throws caches nothing (the next call tries again).
   */
  getOrCreate(key: string, cells: number, create: () => T): T {
    const cached = this.get(key);
    if (cached !== undefined) {
      this.hits++;
      return cached;
    }
    this.misses++;
    const value = create();
    this.set(key, value, cells);
    return value;
  }

  /** Forget one entry. */
  remove(key: string): void {
    const entry = this.entries.get(key);
    if (!entry) return;
    this.entries.delete(key);
    this.totalCells -= entry.cells;
  }

  /** Forget everything (counters included). */
  clear(): void {
    this.entries.clear();
    this.totalCells = 0;
    this.hits = 0;
    this.misses = 0;
  }

  stats(): FitCacheStats {
    return { hits: this.hits, misses: this.misses, entries: this.entries.size, cells: this.totalCells };
  }

  private evict(): void {
    while (this.entries.size > this.maxEntries || this.totalCells > this.maxCells) {
      const oldest = this.entries.keys().next();
      if (oldest.done) break;
      this.remove(oldest.value);
    }
  }
}

// ---- content keys -----------------------------------------------------------------------------------

/** Scratch view to read a double's 64 bits as two 32-bit words (no string conversion per number). */
const F64 = new Float64Array(1);
const U32 = new Uint32Array(F64.buffer);

/** Type tags, fed before each value: they keep 1, "1", TRUE, "" and a blank apart. */
const TAG = { blank: 1, number: 2, true: 3, false: 4, text: 5, array: 6, typed: 7, object: 8, other: 9, end: 10 } as const;
/** TAG.number and TAG.text as plain constants for the hot loop. */
const NUMBER_TAG = 2;
const TEXT_TAG = 5;

/*
 * The key: two 32-bit streams folded over 32-bit units (FNV-1a style multiply-xor; the second stream
 * uses another prime, mixes the position and shifts), 64 bits of key in all. Numbers enter as the two
 * words of their IEEE-754 bits, text as UTF-16 code units, each value after a type tag.
 * FNV: G. Fowler, L. C. Noll, K.-P. Vo, "FNV hash", IETF draft-eastlake-fnv (2019).
 *
 * The state (stream a, stream b, units so far) lives in an Int32Array and the feeding functions are
 * plain module functions: a worksheet row is hashed in one loop over locals, and the optimized code
 * depends on no per-call object (code specialized on one would be thrown away at the next collection).
 */
type KeyState = Int32Array;
const A = 0;
const B = 1;
const N = 2;

function newState(): KeyState {
  const st = new Int32Array(3);
  st[A] = 0x811c9dc5;
  st[B] = 0x01000193 ^ 0x5bd1e995;
  return st;
}

function unit(st: KeyState, c: number): void {
  const n = st[N];
  st[A] = Math.imul(st[A] ^ c, 0x01000193);
  const b = Math.imul(st[B] ^ (c + n), 0x5bd1e995);
  st[B] = b ^ (b >>> 15);
  st[N] = (n + 1) | 0;
}

function feedText(st: KeyState, s: string): void {
  unit(st, s.length);
  for (let i = 0; i < s.length; i++) unit(st, s.charCodeAt(i));
}

function feedNumber(st: KeyState, x: number): void {
  F64[0] = x === 0 ? 0 : x; // -0 and 0 are the same cell value
  unit(st, U32[0]);
  unit(st, U32[1]);
}

/**
 * The elements of an array (typically a worksheet row), each as feedValue feeds it, with numbers and
 * text, most cells, hashed in locals; with a sizer, also the sum of the cells' sizes (else 0).
 */
function feedElements(st: KeyState, v: readonly unknown[], sizer: CellSizer | null): number {
  let bytes = 0;
  let a = st[A];
  let b = st[B];
  let n = st[N];
  for (let i = 0; i < v.length; i++) {
    const x = v[i];
    if (typeof x === "number") {
      if (sizer !== null) bytes += sizer.number(x);
      // TAG.number, then the two words of the bits (-0 as 0), as feedValue feeds a number.
      F64[0] = x === 0 ? 0 : x;
      const lo = U32[0];
      const hi = U32[1];
      a = Math.imul(a ^ NUMBER_TAG, 0x01000193);
      b = Math.imul(b ^ (NUMBER_TAG + n), 0x5bd1e995);
      b ^= b >>> 15;
      n = (n + 1) | 0;
      a = Math.imul(a ^ lo, 0x01000193);
      b = Math.imul(b ^ (lo + n), 0x5bd1e995);
      b ^= b >>> 15;
      n = (n + 1) | 0;
      a = Math.imul(a ^ hi, 0x01000193);
      b = Math.imul(b ^ (hi + n), 0x5bd1e995);
      b ^= b >>> 15;
      n = (n + 1) | 0;
    } else if (typeof x === "string") {
      if (sizer !== null) bytes += sizer.other(x);
      // TAG.text, the length, then the UTF-16 code units, as feedValue feeds text.
      for (let u = -2; u < x.length; u++) {
        const c = u === -2 ? TEXT_TAG : u === -1 ? x.length : x.charCodeAt(u);
        a = Math.imul(a ^ c, 0x01000193);
        b = Math.imul(b ^ (c + n), 0x5bd1e995);
        b ^= b >>> 15;
        n = (n + 1) | 0;
      }
    } else {
      if (sizer !== null) bytes += sizer.other(x);
      st[A] = a;
      st[B] = b;
      st[N] = n;
      feedValue(st, x);
      a = st[A];
      b = st[B];
      n = st[N];
    }
  }
  st[A] = a;
  st[B] = b;
  st[N] = n;
  return bytes;
}

/**
 * An array as feedValue feeds it, a range's rows each in one loop; with a sizer, also returns the
 * size of the array as JSON text by the sizer's cell sizes: 2 for the brackets, 2 more per row
 * (without one, 0).
 */
function feedArray(st: KeyState, v: readonly unknown[], sizer: CellSizer | null): number {
  unit(st, TAG.array);
  unit(st, v.length);
  let bytes = 2;
  for (let i = 0; i < v.length; i++) {
    const row: unknown = v[i];
    if (Array.isArray(row)) {
      unit(st, TAG.array);
      unit(st, row.length);
      bytes += 2 + feedElements(st, row, sizer);
    } else {
      feedValue(st, row);
      if (sizer !== null) bytes += typeof row === "number" ? sizer.number(row) : sizer.other(row);
    }
  }
  return sizer === null ? 0 : bytes;
}

function feedValue(st: KeyState, v: unknown): void {
  if (v === null || v === undefined) unit(st, TAG.blank);
  else if (typeof v === "number") {
    unit(st, TAG.number);
    feedNumber(st, v);
  } else if (typeof v === "boolean") unit(st, v ? TAG.true : TAG.false);
  else if (typeof v === "string") {
    unit(st, TAG.text);
    feedText(st, v);
  } else if (Array.isArray(v)) feedArray(st, v, null);
  else if (ArrayBuffer.isView(v) && "length" in v) {
    const arr = v as unknown as ArrayLike<number>;
    unit(st, TAG.typed);
    unit(st, arr.length);
    for (let i = 0; i < arr.length; i++) feedNumber(st, arr[i]);
  } else if (typeof v === "object") {
    const obj = v as Record<string, unknown>;
    const keys = Object.keys(obj)
      .filter((k) => obj[k] !== undefined)
      .sort();
    unit(st, TAG.object);
    unit(st, keys.length);
    for (const k of keys) {
      feedText(st, k);
      feedValue(st, obj[k]);
    }
  } else {
    unit(st, TAG.other);
    feedText(st, String(v));
  }
}

function digest(st: KeyState): string {
  const hex = (x: number) => (x >>> 0).toString(16).padStart(8, "0");
  return hex(st[A]) + hex(st[B]) + ":" + (st[N] >>> 0).toString(36);
}

/**
 * A content key for any mix of cell arrays, typed arrays and plain option objects. Equal content
 * (including value types, array shapes and object keys in any order) gives equal keys.
 * @example contentKey("fit", [[1, "a"]], { penalty: 0 }) === contentKey("fit", [[1, "a"]], { penalty: 0 })
 */
export function contentKey(...parts: unknown[]): string {
  const st = newState();
  for (const p of parts) feedValue(st, p);
  return digest(st);
}

/** Sizes of cells, for contentKeyAndSizes: one number cell, and any other cell. */
export interface CellSizer {
  number(x: number): number;
  other(v: unknown): number;
}

/**
 * contentKey(...parts), and in the same pass over the cells the size of each array part by `sizer`
 * (0 for a part that is not an array, and for every part without a sizer): a range is read once for
 * its key and its size.
 * @example contentKeyAndSizes(["fit", [[1, "a"]]], sizer).key === contentKey("fit", [[1, "a"]])
 */
export function contentKeyAndSizes(parts: readonly unknown[], sizer: CellSizer | null): { key: string; sizes: number[] } {
  const st = newState();
  const sizes: number[] = [];
  for (const p of parts) {
    if (Array.isArray(p)) sizes.push(feedArray(st, p, sizer));
    else {
      feedValue(st, p);
      sizes.push(0);
    }
  }
  return { key: digest(st), sizes };
}

/** Number of cells in a list of 2-D ranges (non-arrays count 1). */
export function cellCount(...ranges: unknown[]): number {
  let total = 0;
  for (const r of ranges) {
    if (!Array.isArray(r)) total += 1;
    else for (const row of r) total += Array.isArray(row) ? row.length : 1;
  }
  return total;
}

const GLOBAL_KEY = "__oddsmithFitCache__";

/**
 * The one cache shared by every bundle in the runtime (cell functions and task pane).
 * Created on first use with the default bounds.
 */
export function sharedFitCache<T = unknown>(): FitCache<T> {
  const g = globalThis as unknown as Record<string, unknown>;
  // Not `instanceof FitCache`: the other bundle's class is a different object.
  if (typeof g[GLOBAL_KEY] !== "object" || g[GLOBAL_KEY] === null) g[GLOBAL_KEY] = new FitCache<T>();
  return g[GLOBAL_KEY] as FitCache<T>;
}
