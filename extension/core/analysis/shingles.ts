/**
 * Near-duplicate passages by w-shingling (Broder, "On the resemblance and containment of
 * documents", SEQUENCES 1997). With S(D, w) the set of contiguous w-word sequences of D:
 *
 *   r_w(A, B) = |S(A) ∩ S(B)| / |S(A) ∪ S(B)|      resemblance
 *   c_w(A, B) = |S(A) ∩ S(B)| / |S(A)|             containment of A in B
 *
 * `option: 'set'` is the paper's Option B (a set of shingles, used everywhere in the product);
 * `'labelled'` is Option A (each shingle labelled with its occurrence number, i.e. a bag).
 * Words come from `words()` (lower-cased, punctuation removed, articles kept).
 *
 * For very large turns we switch to the paper's fixed-size sample: a bottom-k sketch (the k
 * smallest hash values of a document's shingles under one hash function, xxHash32 from
 * `xxhash-wasm`), which estimates r from k values per passage instead of whole shingle sets.
 */
import xxhash from 'xxhash-wasm';
import { words } from './normalize';
import type { TextSource } from './textfacts';
import type { DuplicateCheck, DuplicatePair } from './types';

export type ShingleOption = 'set' | 'labelled';

/**
 * w-word shingles of a word list, as a bag (shingle → occurrences). Words never contain a
 * space, so joining with one is unambiguous. A text shorter than w words (but not empty) is one
 * shingle of all its words, so short identical passages still compare equal (our choice).
 */
export function shingleBag(tokens: readonly string[], w: number): Map<string, number> {
  if (!Number.isInteger(w) || w < 1) throw new Error(`shingle size must be a positive integer, got ${w}`);
  const bag = new Map<string, number>();
  if (tokens.length === 0) return bag;
  if (tokens.length < w) {
    bag.set(tokens.join(' '), 1);
    return bag;
  }
  for (let i = 0; i + w <= tokens.length; i++) {
    const shingle = tokens.slice(i, i + w).join(' ');
    bag.set(shingle, (bag.get(shingle) ?? 0) + 1);
  }
  return bag;
}

/** S(D, w) as a set (Option B). */
export function shingleSet(text: string, w: number): Set<string> {
  return new Set(shingleBag(words(text), w).keys());
}

/** |S(A) ∩ S(B)|, |S(A)|, |S(B)| under the chosen option. */
function overlapSizes(a: string, b: string, w: number, option: ShingleOption): { common: number; sizeA: number; sizeB: number } {
  const bagA = shingleBag(words(a), w);
  const bagB = shingleBag(words(b), w);
  let common = 0;
  let sizeA = 0;
  let sizeB = 0;
  for (const [s, n] of bagA) {
    sizeA += option === 'labelled' ? n : 1;
    const m = bagB.get(s);
    if (m !== undefined) common += option === 'labelled' ? Math.min(n, m) : 1;
  }
  for (const n of bagB.values()) sizeB += option === 'labelled' ? n : 1;
  return { common, sizeA, sizeB };
}

/** r_w(A, B); 0 when both texts are empty. */
export function resemblance(a: string, b: string, w: number, option: ShingleOption = 'set'): number {
  const { common, sizeA, sizeB } = overlapSizes(a, b, w, option);
  const union = sizeA + sizeB - common;
  return union === 0 ? 0 : common / union;
}

/** c_w(A, B): share of A's shingles that are also B's; 0 when A is empty. */
export function containment(a: string, b: string, w: number, option: ShingleOption = 'set'): number {
  const { common, sizeA } = overlapSizes(a, b, w, option);
  return sizeA === 0 ? 0 : common / sizeA;
}

// ---------------------------------------------------------------------------------------------
// Bottom-k MinHash. xxhash-wasm compiles its WebAssembly asynchronously, so callers that want
// the estimate on large turns await `loadShingleHasher()` once; until then large turns are
// compared exactly (slower, never wrong) and the turn carries a note.

type Hash32 = (input: string, seed?: number) => number;
let hash32: Hash32 | null = null;

export async function loadShingleHasher(): Promise<void> {
  if (!hash32) hash32 = (await xxhash()).h32;
}

export function shingleHasherReady(): boolean {
  return hash32 !== null;
}

export interface Sketch {
  /** Ascending distinct hash values, at most k of them. */
  mins: Uint32Array;
  /** Exact number of distinct shingle hashes of the document. */
  size: number;
}

/** Bottom-k sketch of a shingle collection (needs `loadShingleHasher()`). */
export function bottomKSketch(shingles: Iterable<string>, k: number): Sketch {
  if (!hash32) throw new Error('bottomKSketch: call loadShingleHasher() first');
  const hashes = new Set<number>();
  for (const s of shingles) hashes.add(hash32(s, 0) >>> 0);
  const all = Uint32Array.from(hashes).sort();
  return { mins: all.slice(0, k), size: all.length };
}

/**
 * Broder's estimate from two bottom-k sketches: among the k smallest values of the union of the
 * two samples, the share present in both. Standard error ≈ sqrt(r(1 − r)/k).
 */
export function sketchResemblance(a: Sketch, b: Sketch, k: number): number {
  let i = 0;
  let j = 0;
  let taken = 0;
  let both = 0;
  while (taken < k && (i < a.mins.length || j < b.mins.length)) {
    const x = i < a.mins.length ? a.mins[i]! : Infinity;
    const y = j < b.mins.length ? b.mins[j]! : Infinity;
    if (x === y) {
      both++;
      i++;
      j++;
    } else if (x < y) i++;
    else j++;
    taken++;
  }
  return taken === 0 ? 0 : both / taken;
}

/** |A ∩ B| from r and the set sizes (r = I / (|A| + |B| − I)), as a containment of A in B. */
function containmentFromResemblance(r: number, sizeA: number, sizeB: number): number {
  if (sizeA === 0) return 0;
  const intersection = (r * (sizeA + sizeB)) / (1 + r);
  return Math.min(1, intersection / sizeA);
}

// ---------------------------------------------------------------------------------------------

export interface DuplicateInput {
  id: string;
  text: string;
  /** Tokens of the passage that were sent (from the ledger). */
  keptTokens: number;
}

export interface DuplicateSettings {
  shingleWords: number;
  duplicateResemblance: number;
  duplicateContainment: number;
  minhashAboveShingles: number;
  minhashSize: number;
}

/** What `nearDuplicates` reads of a passage text (a memoised TextSource can serve it). */
export type ShingleTexts = Pick<TextSource, 'words' | 'shingles' | 'sketch'>;

export const plainShingleTexts: ShingleTexts = {
  words,
  shingles: shingleSet,
  sketch: (text, w, k) => bottomKSketch(shingleBag(words(text), w).keys(), k),
};

/**
 * Near-duplicate pairs among a turn's passages. `passages` must be ordered best first (rank,
 * then prompt order): in each pair `a` is the better one and `b`'s sent tokens are the waste.
 *
 * Exact mode builds an inverted index shingle → passages, so only pairs sharing a shingle are
 * ever touched: linear in the turn's text unless many passages share the same shingles.
 * MinHash mode holds k hashes per passage (bounded memory) and compares all pairs in O(k).
 */
export function nearDuplicates(
  passages: readonly DuplicateInput[],
  settings: DuplicateSettings,
  notes?: string[],
  texts: ShingleTexts = plainShingleTexts,
): DuplicateCheck {
  const w = settings.shingleWords;
  const tokenLists = passages.map((p) => texts.words(p.text));
  // Shingle positions (an upper bound on distinct shingles), known before building any set.
  const total = tokenLists.reduce((sum, t) => sum + (t.length === 0 ? 0 : Math.max(1, t.length - w + 1)), 0);
  const useMinhash = total > settings.minhashAboveShingles && hash32 !== null;
  if (total > settings.minhashAboveShingles && hash32 === null) {
    notes?.push(`near-duplicates compared exactly (${total} shingles): MinHash hasher not loaded`);
  }
  const pairs: DuplicatePair[] = [];
  const consider = (i: number, j: number, r: number, cij: number, cji: number): void => {
    if (r < settings.duplicateResemblance && cij < settings.duplicateContainment && cji < settings.duplicateContainment) return;
    const a = passages[i]!;
    const b = passages[j]!;
    pairs.push({ a: a.id, b: b.id, resemblance: r, containmentAB: cij, containmentBA: cji, wastedTokens: a.keptTokens > 0 ? b.keptTokens : 0 });
  };

  if (useMinhash) {
    const k = settings.minhashSize;
    // One passage's shingles at a time: memory is k values per passage plus the largest passage.
    const sketches = passages.map((p) => texts.sketch(p.text, w, k));
    for (let i = 0; i < sketches.length; i++) {
      for (let j = i + 1; j < sketches.length; j++) {
        const si = sketches[i]!;
        const sj = sketches[j]!;
        const r = sketchResemblance(si, sj, k);
        if (r === 0) continue;
        consider(i, j, r, containmentFromResemblance(r, si.size, sj.size), containmentFromResemblance(r, sj.size, si.size));
      }
    }
  } else {
    const sets = passages.map((p) => texts.shingles(p.text, w));
    const owners = new Map<string, number[]>();
    const common = new Map<number, number>();
    const n = sets.length;
    sets.forEach((set, j) => {
      for (const s of set) {
        const list = owners.get(s);
        if (!list) {
          owners.set(s, [j]);
          continue;
        }
        for (const i of list) common.set(i * n + j, (common.get(i * n + j) ?? 0) + 1);
        list.push(j);
      }
    });
    const keys = [...common.keys()].sort((x, y) => x - y);
    for (const key of keys) {
      const i = Math.floor(key / n);
      const j = key % n;
      const c = common.get(key)!;
      const sizeI = sets[i]!.size;
      const sizeJ = sets[j]!.size;
      consider(i, j, c / (sizeI + sizeJ - c), c / sizeI, c / sizeJ);
    }
  }
  const wasted = new Map<string, number>();
  for (const p of pairs) if (p.wastedTokens > 0) wasted.set(p.b, p.wastedTokens);
  let wastedTokens = 0;
  for (const t of wasted.values()) wastedTokens += t;
  return { method: useMinhash ? 'minhash' : 'exact', w, shingles: total, pairs, wastedTokens };
}
