/**
 * The token accountant: exact counts from the real encoder, memoised by content hash so that text
 * re-sent every turn (history) or retrieved again (passages) is counted once. The memo is an LRU
 * bounded by entry count; keys are a 64-bit xxHash of the UTF-8 text plus its length, kept per
 * encoding (a wrong count would need a 64-bit collision between two texts of equal length).
 */
import { LRUCache } from 'lru-cache';
import xxhash from 'xxhash-wasm';
import { loadEncoder, type Encoder, type EncodingName } from './encoder';

type Hasher = Awaited<ReturnType<typeof xxhash>>;
let hasherPromise: Promise<Hasher> | undefined;

/** Texts shorter than this are their own memo key (hashing them costs more than it saves). */
const SHORT_KEY = 48;

export interface AccountantStats {
  hits: number;
  misses: number;
  entries: number;
  /** Characters actually given to the encoder. */
  encodedChars: number;
}

export class Accountant {
  private readonly memos = new Map<EncodingName, LRUCache<string, number>>();
  private readonly encoders = new Map<EncodingName, Encoder>();
  private hits = 0;
  private misses = 0;
  private encodedChars = 0;

  private constructor(
    private readonly hasher: Hasher,
    private readonly memoEntries: number,
  ) {}

  static async create(opts: { memoEntries?: number } = {}): Promise<Accountant> {
    hasherPromise ??= xxhash();
    return new Accountant(await hasherPromise, opts.memoEntries ?? 500_000);
  }

  /** Loads (once) and returns the encoder; counting needs it loaded first. */
  async encoder(name: EncodingName): Promise<Encoder> {
    let e = this.encoders.get(name);
    if (!e) {
      e = await loadEncoder(name);
      this.encoders.set(name, e);
    }
    return e;
  }

  loadedEncoder(name: EncodingName): Encoder {
    const e = this.encoders.get(name);
    if (!e) throw new Error(`encoder ${name} not loaded: await accountant.encoder('${name}') first`);
    return e;
  }

  key(text: string): string {
    return text.length < SHORT_KEY ? `s${text}` : `${this.hasher.h64ToString(text)}:${text.length}`;
  }

  /** Exact token count of `text`, memoised. The encoder must have been loaded with `encoder()`. */
  count(name: EncodingName, text: string): number {
    if (text.length === 0) return 0;
    let memo = this.memos.get(name);
    if (!memo) {
      memo = new LRUCache<string, number>({ max: this.memoEntries });
      this.memos.set(name, memo);
    }
    const k = this.key(text);
    const hit = memo.get(k);
    if (hit !== undefined) {
      this.hits++;
      return hit;
    }
    this.misses++;
    this.encodedChars += text.length;
    const n = this.loadedEncoder(name).count(text);
    memo.set(k, n);
    return n;
  }

  stats(): AccountantStats {
    let entries = 0;
    for (const m of this.memos.values()) entries += m.size;
    return { hits: this.hits, misses: this.misses, entries, encodedChars: this.encodedChars };
  }
}
