/**
 * A bounded memo keyed by a text's content, for per-text work that recurs across records (a log
 * retrieves the same passages again and again). Two generations: lookups fill the current map;
 * when it holds `limit` entries it becomes the previous one and the old previous is dropped, so
 * at most 2 × limit entries are held. A hit in the previous generation is carried forward.
 * Cheaper than an LRU (no reordering per hit) and good enough for a skewed reuse pattern.
 */
export class TextMemo<V> {
  private current = new Map<string, V>();
  private previous = new Map<string, V>();

  constructor(readonly limit: number) {
    if (!Number.isInteger(limit) || limit < 1) throw new Error(`TextMemo: limit must be a positive integer, got ${limit}`);
  }

  /** The value for `key`, made with `make(key)` on a miss. `make` must depend on `key` only. */
  get(key: string, make: (key: string) => V): V {
    let value = this.current.get(key);
    if (value !== undefined) return value;
    value = this.previous.get(key);
    if (value === undefined) value = make(key);
    if (this.current.size >= this.limit) {
      this.previous = this.current;
      this.current = new Map();
    }
    this.current.set(key, value);
    return value;
  }

  /** Entries held (both generations; a key can be in both, counted twice). */
  get size(): number {
    return this.current.size + this.previous.size;
  }

  clear(): void {
    this.current = new Map();
    this.previous = new Map();
  }
}
