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

/**
 * Two 32-bit streams folded over 32-bit units (FNV-1a style multiply-xor; the second stream uses
 * another prime, mixes the position and shifts), 64 bits of key in all. Numbers enter as the two
 * words of their IEEE-754 bits, text as UTF-16 code units, each value after a type tag.
 * FNV: G. Fowler, L. C. Noll, K.-P. Vo, "FNV hash", IETF draft-eastlake-fnv (2019).
 */
class KeyHasher {
  private a = 0x811c9dc5;
  private b = 0x01000193 ^ 0x5bd1e995;
  private n = 0;

  private unit(c: number): void {
    this.a = Math.imul(this.a ^ c, 0x01000193);
    this.b = Math.imul(this.b ^ (c + this.n), 0x5bd1e995);
    this.b ^= this.b >>> 15;
    this.n = (this.n + 1) | 0;
  }

  private text(s: string): void {
    this.unit(s.length);
    for (let i = 0; i < s.length; i++) this.unit(s.charCodeAt(i));
  }

  private number(x: number): void {
    F64[0] = x === 0 ? 0 : x; // -0 and 0 are the same cell value
    this.unit(U32[0]);
    this.unit(U32[1]);
  }

  value(v: unknown): void {
    if (v === null || v === undefined) this.unit(TAG.blank);
    else if (typeof v === "number") {
      this.unit(TAG.number);
      this.number(v);
    } else if (typeof v === "boolean") this.unit(v ? TAG.true : TAG.false);
    else if (typeof v === "string") {
      this.unit(TAG.text);
      this.text(v);
    } else if (Array.isArray(v)) {
      this.unit(TAG.array);
      this.unit(v.length);
      for (let i = 0; i < v.length; i++) {
        const x = v[i];
        if (typeof x !== "number") {
          this.value(x);
          continue;
        }
        // Numbers (most cells) inline, in locals: the same three units as value() feeds.
        F64[0] = x === 0 ? 0 : x;
        let a = this.a;
        let b = this.b;
        let n = this.n;
        for (let u = 0; u < 3; u++) {
          const c = u === 0 ? TAG.number : U32[u - 1];
          a = Math.imul(a ^ c, 0x01000193);
          b = Math.imul(b ^ (c + n), 0x5bd1e995);
          b ^= b >>> 15;
          n = (n + 1) | 0;
        }
        this.a = a;
        this.b = b;
        this.n = n;
      }
    } else if (ArrayBuffer.isView(v) && "length" in v) {
      const arr = v as unknown as ArrayLike<number>;
      this.unit(TAG.typed);
      this.unit(arr.length);
      for (let i = 0; i < arr.length; i++) this.number(arr[i]);
    } else if (typeof v === "object") {
      const obj = v as Record<string, unknown>;
      const keys = Object.keys(obj)
        .filter((k) => obj[k] !== undefined)
        .sort();
      this.unit(TAG.object);
      this.unit(keys.length);
      for (const k of keys) {
        this.text(k);
        this.value(obj[k]);
      }
    } else {
      this.unit(TAG.other);
      this.text(String(v));
    }
  }

  digest(): string {
    const hex = (x: number) => (x >>> 0).toString(16).padStart(8, "0");
    return hex(this.a) + hex(this.b) + ":" + (this.n >>> 0).toString(36);
  }
}

/**
 * A content key for any mix of cell arrays, typed arrays and plain option objects. Equal content
 * (including value types, array shapes and object keys in any order) gives equal keys.
 * @example contentKey("fit", [[1, "a"]], { penalty: 0 }) === contentKey("fit", [[1, "a"]], { penalty: 0 })
 */
export function contentKey(...parts: unknown[]): string {
  const h = new KeyHasher();
  for (const p of parts) h.value(p);
  return h.digest();
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
