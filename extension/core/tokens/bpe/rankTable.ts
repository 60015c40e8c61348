/**
 * Byte-string → rank table built from gpt-tokenizer's own vocabulary arrays (`gpt-tokenizer/bpeRanks/*`:
 * index = rank, value = the token as a string when its bytes are valid UTF-8, else the raw byte list).
 *
 * Keys are "binary strings": one UTF-16 unit per byte (0–255). This lets the merge look up any byte range
 * of a piece with one `substring` and one Map lookup, with no per-lookup byte copying. Built lazily, only
 * when a text actually needs the exact long-piece merge (about 0.1–0.3 s and ~15–30 MB for o200k_base).
 */
export type RawRanks = ReadonlyArray<string | readonly number[]>;

const utf8 = new TextEncoder();

/** Bytes (0–255) → binary string, in chunks so huge pieces never overflow the argument stack. */
export function bytesToBinary(bytes: Uint8Array): string {
  const CHUNK = 8192;
  if (bytes.length <= CHUNK) return String.fromCharCode.apply(null, bytes as unknown as number[]);
  const parts: string[] = [];
  for (let i = 0; i < bytes.length; i += CHUNK) {
    parts.push(String.fromCharCode.apply(null, bytes.subarray(i, i + CHUNK) as unknown as number[]));
  }
  return parts.join('');
}

/** UTF-8 bytes of a JS string as a binary string. Lone surrogates become U+FFFD (as TextEncoder does). */
export function textToBinary(text: string): string {
  for (let i = 0; i < text.length; i++) {
    if (text.charCodeAt(i) > 0x7f) return bytesToBinary(utf8.encode(text));
  }
  return text; // ASCII: the binary string is the text itself
}

/**
 * UTF-8 of a well-formed string (vocabulary entries) as a binary string, without a TextEncoder allocation
 * per entry: building the o200k_base table this way takes about half the time.
 */
function wellFormedToBinary(text: string): string {
  let ascii = true;
  for (let i = 0; i < text.length; i++) {
    if (text.charCodeAt(i) > 0x7f) {
      ascii = false;
      break;
    }
  }
  if (ascii) return text;
  const b: number[] = [];
  for (const ch of text) {
    const c = ch.codePointAt(0)!;
    if (c < 0x80) b.push(c);
    else if (c < 0x800) b.push(0xc0 | (c >> 6), 0x80 | (c & 63));
    else if (c < 0x10000) b.push(0xe0 | (c >> 12), 0x80 | ((c >> 6) & 63), 0x80 | (c & 63));
    else b.push(0xf0 | (c >> 18), 0x80 | ((c >> 12) & 63), 0x80 | ((c >> 6) & 63), 0x80 | (c & 63));
  }
  return String.fromCharCode(...b);
}

export class RankTable {
  private map: Map<string, number> | undefined;
  private readonly bytesCache: Array<Uint8Array | undefined> = [];

  constructor(private readonly raw: RawRanks) {}

  /** The byte-string map, built on first use (decoding alone never needs it). */
  private get byBinary(): Map<string, number> {
    if (this.map) return this.map;
    const map = new Map<string, number>();
    this.raw.forEach((value, rank) => {
      const key = typeof value === 'string' ? wellFormedToBinary(value) : String.fromCharCode(...value);
      map.set(key, rank);
    });
    return (this.map = map);
  }

  /** Rank of the byte string `bin.substring(start, end)`, or -1 when it is not a token. */
  rankOf(bin: string, start: number, end: number): number {
    const r = this.byBinary.get(bin.substring(start, end));
    return r === undefined ? -1 : r;
  }

  /** Rank of a whole binary string, or -1. */
  rankOfBinary(key: string): number {
    const r = this.byBinary.get(key);
    return r === undefined ? -1 : r;
  }

  /** The bytes a mergeable token stands for; undefined for ids outside the vocabulary (e.g. special tokens). */
  bytesOf(id: number): Uint8Array | undefined {
    let b = this.bytesCache[id];
    if (b) return b;
    const value = this.raw[id];
    if (value === undefined) return undefined;
    b = typeof value === 'string' ? utf8.encode(value) : Uint8Array.from(value);
    this.bytesCache[id] = b;
    return b;
  }
}
