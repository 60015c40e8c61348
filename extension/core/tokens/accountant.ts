/**
 * The token accountant: exact counts from the real encoder, memoised by content hash so that text
 * re-sent every turn (history) or retrieved again (passages) is counted once. The memo is bounded by
 * entry count (../cache/generational.ts); keys are a 64-bit xxHash of the UTF-8 text plus its length, kept per
 * encoding (a wrong count would need a 64-bit collision between two texts of equal length).
 */
import xxhash from 'xxhash-wasm';
import { GenerationalMemo } from '../cache/generational';
import { loadEncoder, type Encoder, type EncodingName } from './encoder';
import type { SharedCounts } from './sharedCounts';

type Hasher = Awaited<ReturnType<typeof xxhash>>;
let hasherPromise: Promise<Hasher> | undefined;

/** Texts shorter than this are their own memo key (hashing them costs more than it saves). */
const SHORT_KEY = 48;
/** Conversations whose last record is kept for countSegments (each holds references to one record's texts). */
const CARRY_CONVERSATIONS = 2048;
/** Texts shorter than this (roles, names) use a small memo of their own. */
const TINY = 16;
const TINY_ENTRIES = 4096;
/** Token-id arrays kept per encoding (a few kB each: bounded at about 16 MB for passages of ~500 tokens). */
const ID_MEMO_ENTRIES = 4096;

export interface AccountantStats {
  hits: number;
  misses: number;
  entries: number;
  /** Characters actually given to the encoder. */
  encodedChars: number;
  /** Of the hits, those found in the table shared with other threads (parallel audit). */
  sharedHits?: number;
}

/** What the accountant keeps per encoding, created when the encoder is loaded. */
interface PerEncoding {
  encoder: Encoder;
  /** Roles, names and other very short texts, keyed by themselves: small enough to stay in the CPU cache. */
  tiny: GenerationalMemo<string, number>;
  /** Texts shorter than SHORT_KEY, keyed by themselves. */
  short: GenerationalMemo<string, number>;
  /** Longer texts, keyed by hash and length (see `key`). */
  long: GenerationalMemo<string, number>;
  /** Token ids of long texts (see `encode`). */
  ids: GenerationalMemo<string, readonly number[]>;
}

export class Accountant {
  private readonly perEncoding = new Map<EncodingName, PerEncoding>();
  private hits = 0;
  private misses = 0;
  private encodedChars = 0;
  private sharedHits = 0;
  /** Per encoding and conversation, the last record's segment texts and counts (see countSegments). */
  private readonly carry = new GenerationalMemo<string, { index: Map<string, number>; texts: string[]; counts: number[] }>(CARRY_CONVERSATIONS);

  private constructor(
    private readonly hasher: Hasher,
    private readonly memoEntries: number,
    private readonly shared: SharedCounts | undefined,
  ) {}

  /** `shared`: counts shared with other threads, consulted when this memo misses (long texts only). */
  static async create(opts: { memoEntries?: number; shared?: SharedCounts } = {}): Promise<Accountant> {
    hasherPromise ??= xxhash();
    return new Accountant(await hasherPromise, opts.memoEntries ?? 500_000, opts.shared);
  }

  /** Loads (once) and returns the encoder; counting needs it loaded first. */
  async encoder(name: EncodingName): Promise<Encoder> {
    const have = this.perEncoding.get(name);
    if (have) return have.encoder;
    const encoder = await loadEncoder(name);
    // Another caller may have loaded it while this one awaited: keep the first memos.
    const e = this.perEncoding.get(name) ?? {
      encoder,
      tiny: new GenerationalMemo<string, number>(TINY_ENTRIES),
      short: new GenerationalMemo<string, number>(this.memoEntries),
      long: new GenerationalMemo<string, number>(this.memoEntries),
      ids: new GenerationalMemo<string, readonly number[]>(ID_MEMO_ENTRIES),
    };
    this.perEncoding.set(name, e);
    return e.encoder;
  }

  private loaded(name: EncodingName): PerEncoding {
    const e = this.perEncoding.get(name);
    if (!e) throw new Error(`encoder ${name} not loaded: await accountant.encoder('${name}') first`);
    return e;
  }

  loadedEncoder(name: EncodingName): Encoder {
    return this.loaded(name).encoder;
  }

  /** The memo key of a text: itself when short, else 16 hex digits of its hash, ':' and its length. */
  key(text: string): string {
    return text.length < SHORT_KEY ? text : `${this.hasher.h64ToString(text)}:${text.length}`;
  }

  /** Exact token count of `text`, memoised. The encoder must have been loaded with `encoder()`. */
  count(name: EncodingName, text: string): number {
    if (text.length === 0) return 0;
    const e = this.loaded(name);
    const memo = text.length < TINY ? e.tiny : text.length < SHORT_KEY ? e.short : e.long;
    const k = this.key(text);
    const hit = memo.get(k);
    if (hit !== undefined) {
      this.hits++;
      return hit;
    }
    const sh = this.shared && text.length >= SHORT_KEY ? this.shared : undefined;
    const hi = sh ? parseInt(k.slice(0, 8), 16) | 0 : 0;
    const lo = sh ? parseInt(k.slice(8, 16), 16) | 0 : 0;
    const found = sh?.get(name, hi, lo, text.length);
    if (found !== undefined) {
      this.hits++;
      this.sharedHits++;
      memo.set(k, found);
      return found;
    }
    this.misses++;
    this.encodedChars += text.length;
    const n = e.encoder.count(text);
    memo.set(k, n);
    sh?.set(name, hi, lo, text.length, n);
    return n;
  }

  /**
   * Counts of each segment's text. A conversation re-sends its history every turn under the same
   * segment ids, so a text equal to the one the same id had in this conversation's last record takes
   * that record's count, compared as strings (exact, and cheaper than hashing it again). Other texts go
   * through `count`. `conversation` undefined: every text goes through `count`.
   */
  countSegments(name: EncodingName, conversation: string | undefined, segments: readonly { id: string; text: string }[]): number[] {
    const counts = new Array<number>(segments.length);
    if (conversation === undefined) {
      for (let i = 0; i < segments.length; i++) counts[i] = this.count(name, segments[i]!.text);
      return counts;
    }
    const scope = `${name}\u0000${conversation}`;
    const prev = this.carry.get(scope);
    const index = new Map<string, number>();
    const texts = new Array<string>(segments.length);
    for (let i = 0; i < segments.length; i++) {
      const s = segments[i]!;
      const j = prev?.index.get(s.id);
      if (j !== undefined && prev!.texts[j] === s.text) {
        this.hits++;
        counts[i] = prev!.counts[j]!;
      } else counts[i] = this.count(name, s.text);
      index.set(s.id, i);
      texts[i] = s.text;
    }
    this.carry.set(scope, { index, texts, counts });
    return counts;
  }

  /**
   * The token ids of `text` (for cut points), memoised for long texts: a passage clipped in one turn
   * is usually clipped again in later ones. Callers must not modify the array.
   */
  encode(name: EncodingName, text: string): readonly number[] {
    const e = this.loaded(name);
    if (text.length < SHORT_KEY) return e.encoder.encode(text);
    return e.ids.getOr(this.key(text), () => e.encoder.encode(text));
  }

  stats(): AccountantStats {
    let entries = 0;
    for (const e of this.perEncoding.values()) entries += e.tiny.size + e.short.size + e.long.size;
    const out: AccountantStats = { hits: this.hits, misses: this.misses, entries, encodedChars: this.encodedChars };
    if (this.shared) out.sharedHits = this.sharedHits;
    return out;
  }
}
