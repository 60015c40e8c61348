/**
 * Token counts shared by the parallel audit's worker threads: a fixed-size open-addressing table in a
 * SharedArrayBuffer, keyed like the accountant's memo (64-bit xxHash of the text + its length), one
 * table per encoding. Without it each worker would encode every text it had not seen itself — with
 * conversations interleaved in a log, every history turn once per worker.
 *
 * Entries are written once and never change or move, so readers need no lock: a writer claims an
 * empty slot with compare-and-swap, fills it, then publishes it (state READY) with an atomic store;
 * a reader only trusts READY slots. When the table is 3/4 full it stops taking entries (each worker's
 * own memo still works), so its memory is fixed: `slots × 20` bytes per encoding.
 */
const EMPTY = 0;
const WRITING = 1;
const READY = 2;
const FIELDS = 5; // state, hash hi, hash lo, length, count
const PROBES = 16;

export interface SharedCountsInit {
  /** One buffer per encoding name. */
  buffers: Record<string, SharedArrayBuffer>;
  slots: number;
}

export class SharedCounts {
  private readonly tables = new Map<string, Int32Array>();
  private readonly mask: number;
  private readonly limit: number;

  private constructor(private readonly init: SharedCountsInit) {
    this.mask = init.slots - 1;
    this.limit = Math.floor((init.slots * 3) / 4);
    for (const [name, buf] of Object.entries(init.buffers)) this.tables.set(name, new Int32Array(buf));
  }

  /** New tables of `slots` entries (a power of two) for each encoding; pass `.init` to the workers. */
  static create(encodings: readonly string[], slots = 1 << 20): SharedCounts {
    if (!(slots >= 2 && (slots & (slots - 1)) === 0)) throw new RangeError(`slots must be a power of two, got ${slots}`);
    const buffers: Record<string, SharedArrayBuffer> = {};
    // One extra int32 at the end counts the entries taken.
    for (const e of encodings) buffers[e] = new SharedArrayBuffer((slots * FIELDS + 1) * 4);
    return new SharedCounts({ buffers, slots });
  }

  /** The same tables, seen from another thread. */
  static attach(init: SharedCountsInit): SharedCounts {
    return new SharedCounts(init);
  }

  get shared(): SharedCountsInit {
    return this.init;
  }

  /** The count stored for (hash, length) under `encoding`, or undefined. */
  get(encoding: string, hi: number, lo: number, length: number): number | undefined {
    const t = this.tables.get(encoding);
    if (!t) return undefined;
    let slot = (lo ^ Math.imul(hi, 0x9e3779b1)) & this.mask;
    for (let p = 0; p < PROBES; p++) {
      const at = slot * FIELDS;
      const state = Atomics.load(t, at);
      if (state === EMPTY) return undefined;
      if (state === READY && t[at + 1] === hi && t[at + 2] === lo && t[at + 3] === length) return t[at + 4];
      slot = (slot + 1) & this.mask;
    }
    return undefined;
  }

  /** Stores a count (first writer wins; a full table or a long probe run just declines). */
  set(encoding: string, hi: number, lo: number, length: number, count: number): void {
    const t = this.tables.get(encoding);
    if (!t) return;
    const taken = t.length - 1;
    if (Atomics.load(t, taken) >= this.limit) return;
    let slot = (lo ^ Math.imul(hi, 0x9e3779b1)) & this.mask;
    for (let p = 0; p < PROBES; p++) {
      const at = slot * FIELDS;
      if (Atomics.compareExchange(t, at, EMPTY, WRITING) === EMPTY) {
        t[at + 1] = hi;
        t[at + 2] = lo;
        t[at + 3] = length;
        t[at + 4] = count;
        Atomics.store(t, at, READY); // publishes the fields written above
        Atomics.add(t, taken, 1);
        return;
      }
      if (Atomics.load(t, at) === READY && t[at + 1] === hi && t[at + 2] === lo && t[at + 3] === length) return;
      slot = (slot + 1) & this.mask;
    }
  }

  /** Entries taken per encoding. */
  entries(): number {
    let n = 0;
    for (const t of this.tables.values()) n += Atomics.load(t, t.length - 1);
    return n;
  }
}
