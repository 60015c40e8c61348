/**
 * A bounded memo with least-recently-used behaviour at a fraction of an LRU's cost: two Maps, the
 * young one taking new and re-used entries, the old one holding the previous generation. When the
 * young map fills half the capacity it becomes the old one and the old one is dropped, so at most
 * `capacity` entries are held and an entry used at least once per generation is never evicted.
 * (A "two-generation" or "clock-like" cache: common practice for hot memo paths; a full LRU keeps a
 * linked order on every read, which showed as 9 % of a 1 GiB audit's time.)
 */
export class GenerationalMemo<K, V> {
  private young = new Map<K, V>();
  private old = new Map<K, V>();
  private readonly half: number;

  constructor(capacity: number) {
    if (!(capacity >= 2)) throw new RangeError(`memo capacity must be at least 2, got ${capacity}`);
    this.half = Math.floor(capacity / 2);
  }

  get(key: K): V | undefined {
    const v = this.young.get(key);
    if (v !== undefined) return v;
    const o = this.old.get(key);
    if (o !== undefined) {
      this.old.delete(key);
      this.put(key, o);
    }
    return o;
  }

  /** The value for `key`, made with `make(key)` and stored on a miss (`make` must depend on `key` only). */
  getOr(key: K, make: (key: K) => V): V {
    let v = this.get(key);
    if (v === undefined) {
      v = make(key);
      this.set(key, v);
    }
    return v;
  }

  set(key: K, value: V): void {
    if (this.young.has(key)) this.young.set(key, value);
    else {
      this.old.delete(key);
      this.put(key, value);
    }
  }

  /** Entries held now (at most the capacity). */
  get size(): number {
    return this.young.size + this.old.size;
  }

  clear(): void {
    this.young.clear();
    this.old.clear();
  }

  private put(key: K, value: V): void {
    if (this.young.size >= this.half) {
      this.old = this.young;
      this.young = new Map();
    }
    this.young.set(key, value);
  }
}
