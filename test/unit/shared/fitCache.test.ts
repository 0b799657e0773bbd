/**
 * The fit cache (src/shared/fitCache.ts): content keys that see every cell and its type, LRU
 * eviction bounded by entries and by cells, no caching of failures, one instance per runtime.
 */
import { FitCache, cellCount, contentKey, contentKeyAndSizes, sharedFitCache, type CellSizer } from "../../../src/shared/fitCache";

describe("contentKey", () => {
  test("equal content gives equal keys, whatever the object key order", () => {
    expect(contentKey([[1, "a"]], { penalty: 0, level: 0.95 })).toBe(contentKey([[1, "a"]], { level: 0.95, penalty: 0 }));
  });

  test("tells apart a number, its text, a boolean, a blank and an empty text", () => {
    const keys = [1, "1", true, null, "", 0, "0", false].map((v) => contentKey([[v]]));
    expect(new Set(keys).size).toBe(keys.length);
  });

  test("tells apart the same cells in a different shape", () => {
    expect(contentKey([[1, 2]])).not.toBe(contentKey([[1], [2]]));
    expect(contentKey([["ab", "c"]])).not.toBe(contentKey([["a", "bc"]]));
  });

  test("changes when one cell among many changes", () => {
    const rows = Array.from({ length: 500 }, (_, i) => [i, i % 3 === 0 ? "x" : "y", i / 7]);
    const edited = rows.map((r) => r.slice());
    edited[321][2] = (edited[321][2] as number) + 1e-12;
    expect(contentKey(rows)).not.toBe(contentKey(edited));
  });

  test("treats -0 as 0 (a cell cannot tell them apart)", () => {
    expect(contentKey([[-0]])).toBe(contentKey([[0]]));
  });

  test("sees typed arrays and undefined object fields as documented", () => {
    expect(contentKey(new Float64Array([1, 2]))).not.toBe(contentKey(new Float64Array([1, 3])));
    expect(contentKey({ a: 1, b: undefined })).toBe(contentKey({ a: 1 }));
  });
});

describe("contentKeyAndSizes", () => {
  const parts = ["v1", [["y"], [1], [0]], [["x", "flag"], [0.5, true], [null, "a"]], [1, "b", null], { penalty: 0 }];
  /** One byte per number, ten per other cell: easy to count by hand. */
  const sizer: CellSizer = { number: () => 1, other: () => 10 };

  test("gives the key contentKey gives for the same parts, with or without a sizer", () => {
    expect(contentKeyAndSizes(parts, sizer).key).toBe(contentKey(...parts));
    expect(contentKeyAndSizes(parts, null).key).toBe(contentKey(...parts));
  });

  test("sizes each array part: 2 for its brackets, 2 per row, the sizer's size per cell; 0 for other parts", () => {
    // [["y"], [1], [0]]: 2 + 3 rows x 2 + 10 + 1 + 1; [["x","flag"], [0.5,true], [null,"a"]]: 2 + 3 x 2 + 10 + 10 + 1 + 10 + 10 + 10;
    // [1, "b", null] (a flat row): 2 + 1 + 10 + 10.
    expect(contentKeyAndSizes(parts, sizer).sizes).toEqual([0, 20, 59, 23, 0]);
  });

  test("sizes nothing without a sizer", () => {
    expect(contentKeyAndSizes(parts, null).sizes).toEqual([0, 0, 0, 0, 0]);
  });
});

describe("FitCache", () => {
  test("returns the stored value and counts hits and misses", () => {
    const cache = new FitCache<string>({ maxEntries: 4 });
    let computed = 0;
    const make = () => `v${++computed}`;
    expect(cache.getOrCreate("k", 10, make)).toBe("v1");
    expect(cache.getOrCreate("k", 10, make)).toBe("v1");
    expect(computed).toBe(1);
    expect(cache.stats()).toEqual({ hits: 1, misses: 1, entries: 1, cells: 10 });
  });

  test("evicts the least recently used entry beyond maxEntries", () => {
    const cache = new FitCache<number>({ maxEntries: 2 });
    cache.set("a", 1, 1);
    cache.set("b", 2, 1);
    cache.get("a"); // a is now the most recent
    cache.set("c", 3, 1);
    expect(cache.get("b")).toBeUndefined();
    expect(cache.get("a")).toBe(1);
    expect(cache.get("c")).toBe(3);
  });

  test("keeps the total of cached cells within maxCells", () => {
    const cache = new FitCache<number>({ maxEntries: 10, maxCells: 100 });
    cache.set("a", 1, 60);
    cache.set("b", 2, 30);
    cache.set("c", 3, 30); // 120 > 100: a (oldest) goes
    expect(cache.get("a")).toBeUndefined();
    expect(cache.stats().cells).toBe(60);
  });

  test("does not cache an input larger than maxCells", () => {
    const cache = new FitCache<number>({ maxCells: 100 });
    cache.set("big", 1, 101);
    expect(cache.get("big")).toBeUndefined();
    expect(cache.stats().cells).toBe(0);
  });

  test("caches nothing when the computation throws", () => {
    const cache = new FitCache<number>();
    expect(() =>
      cache.getOrCreate("k", 1, () => {
        throw new Error("bad input");
      }),
    ).toThrow("bad input");
    expect(cache.getOrCreate("k", 1, () => 7)).toBe(7);
  });

  test("replacing a key does not double-count its cells", () => {
    const cache = new FitCache<number>();
    cache.set("a", 1, 10);
    cache.set("a", 2, 15);
    expect(cache.stats()).toMatchObject({ entries: 1, cells: 15 });
  });
});

describe("shared instance", () => {
  test("is one object per runtime, found through globalThis by every bundle", () => {
    const a = sharedFitCache();
    const b = sharedFitCache();
    expect(a).toBe(b);
    expect((globalThis as unknown as Record<string, unknown>).__oddsmithFitCache__).toBe(a);
  });

  test("cellCount adds up the cells of 2-D ranges", () => {
    expect(cellCount([[1, 2], [3, 4]], [[5]], 7)).toBe(6);
  });
});
