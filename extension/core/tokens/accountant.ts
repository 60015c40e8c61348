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
/** Texts shorter than this (roles, names) use a small map of their own. */
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

export class Accountant {
  /** Per encoding: short texts keyed by themselves, long ones by hash and length (see `key`). */
  private readonly memos = new Map<EncodingName, { short: GenerationalMemo<string, number>; long: GenerationalMemo<string, number> }>();
  private readonly encoders = new Map<EncodingName, Encoder>();
  private hits = 0;
  private misses = 0;
  private encodedChars = 0;
  private sharedHits = 0;
  private readonly tiny = new Map<EncodingName, Map<string, number>>();
  /** Per encoding and conversation, the last record's segment texts and counts (see countSegments). */
  private readonly carry = new GenerationalMemo<string, { index: Map<string, number>; texts: string[]; counts: number[] }>(CARRY_CONVERSATIONS);
  private readonly idMemos = new Map<EncodingName, GenerationalMemo<string, readonly number[]>>();

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

  /** The memo key of a text: itself when short, else 16 hex digits of its hash, ':' and its length. */
  key(text: string): string {
    return text.length < SHORT_KEY ? text : `${this.hasher.h64ToString(text)}:${text.length}`;
  }

  /** Exact token count of `text`, memoised. The encoder must have been loaded with `encoder()`. */
  count(name: EncodingName, text: string): number {
    if (text.length === 0) return 0;
    if (text.length < TINY) return this.countTiny(name, text);
    let memos = this.memos.get(name);
    if (!memos) {
      memos = { short: new GenerationalMemo<string, number>(this.memoEntries), long: new GenerationalMemo<string, number>(this.memoEntries) };
      this.memos.set(name, memos);
    }
    const memo = text.length < SHORT_KEY ? memos.short : memos.long;
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
    const n = this.loadedEncoder(name).count(text);
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
   * Roles, names and other very short texts: asked for dozens of times per record, from a map small
   * enough to stay in the CPU cache (cleared if a log has thousands of distinct ones).
   */
  private countTiny(name: EncodingName, text: string): number {
    let tiny = this.tiny.get(name);
    if (!tiny) {
      tiny = new Map();
      this.tiny.set(name, tiny);
    }
    const hit = tiny.get(text);
    if (hit !== undefined) {
      this.hits++;
      return hit;
    }
    this.misses++;
    this.encodedChars += text.length;
    const n = this.loadedEncoder(name).count(text);
    if (tiny.size >= TINY_ENTRIES) tiny.clear();
    tiny.set(text, n);
    return n;
  }

  /**
   * The token ids of `text` (for cut points), memoised for long texts: a passage clipped in one turn
   * is usually clipped again in later ones. Callers must not modify the array.
   */
  encode(name: EncodingName, text: string): readonly number[] {
    const enc = this.loadedEncoder(name);
    if (text.length < SHORT_KEY) return enc.encode(text);
    let memo = this.idMemos.get(name);
    if (!memo) {
      memo = new GenerationalMemo<string, readonly number[]>(ID_MEMO_ENTRIES);
      this.idMemos.set(name, memo);
    }
    const k = this.key(text);
    let ids = memo.get(k);
    if (!ids) {
      ids = enc.encode(text);
      memo.set(k, ids);
    }
    return ids;
  }

  stats(): AccountantStats {
    let entries = 0;
    for (const m of this.memos.values()) entries += m.short.size + m.long.size;
    for (const m of this.tiny.values()) entries += m.size;
    const out: AccountantStats = { hits: this.hits, misses: this.misses, entries, encodedChars: this.encodedChars };
    if (this.shared) out.sharedHits = this.sharedHits;
    return out;
  }
}
