/**
 * What the analyses derive from one text (word list, term counts, SQuAD token counts, shingles,
 * bottom-k sketch), behind one interface so a caller can serve them from a memo. A log re-sends
 * the same passages in many records; `sharedTexts` computes each of these once per distinct text
 * (bounded: see GenerationalMemo), `plainTexts` computes them afresh on every call. Both give the same
 * values; consumers must treat them as read-only.
 */
import { countTokens, type TokenCounts } from './f1';
import { GenerationalMemo } from '../cache/generational';
import { squadTokens, words } from './normalize';
import { bottomKSketch, plainShingleTexts, shingleBag, type Sketch } from './shingles';

export interface SquadCounts {
  /** `squadTokens(text)` counted (the multiset SQuAD F1 compares). */
  counts: TokenCounts;
  length: number;
}

export interface TextSource {
  /** `words(text)`. */
  words(text: string): readonly string[];
  /** Occurrences of each word of `words(text)`; its keys are the text's vocabulary. */
  terms(text: string): ReadonlyMap<string, number>;
  squad(text: string): SquadCounts;
  /** S(text, w) as a set (Option B of Broder 1997). */
  shingles(text: string, w: number): ReadonlySet<string>;
  /** Bottom-k sketch of S(text, w) (needs `loadShingleHasher()`). */
  sketch(text: string, w: number, k: number): Sketch;
}

const squadOf = (text: string): SquadCounts => {
  const tokens = squadTokens(text);
  return { counts: countTokens(tokens), length: tokens.length };
};

/**
 * SQuAD counts of texts joined with spaces, from each text's own counts (which a memo can serve):
 * SQuAD normalisation (lower case, ASCII punctuation and articles removed, whitespace split) never
 * acts across a space, so the joined text's tokens are each text's tokens in turn (checked against
 * the joined text in test/core/analysis/textfacts.test.ts and, property-based, test/core/repack/evidence.test.ts).
 */
export function joinedSquad(parts: readonly SquadCounts[]): SquadCounts {
  if (parts.length === 1) return parts[0]!;
  const counts: TokenCounts = new Map();
  let length = 0;
  for (const p of parts) {
    length += p.length;
    for (const [t, n] of p.counts) counts.set(t, (counts.get(t) ?? 0) + n);
  }
  return { counts, length };
}

/** No memo: every call recomputes. */
export const plainTexts: TextSource = {
  ...plainShingleTexts,
  terms: (text) => countTokens(words(text)),
  squad: squadOf,
};

/** One text's facts, each computed on first use. */
class Facts {
  private wordList?: string[];
  private termMap?: TokenCounts;
  private squadCounts?: SquadCounts;
  /** Keyed by w (settings rarely vary, so these maps hold one entry). */
  private shingleSets?: Map<number, Set<string>>;
  private sketches?: Map<string, Sketch>;

  constructor(private readonly text: string) {}

  words(): string[] {
    return (this.wordList ??= words(this.text));
  }
  terms(): TokenCounts {
    return (this.termMap ??= countTokens(this.words()));
  }
  squad(): SquadCounts {
    return (this.squadCounts ??= squadOf(this.text));
  }
  shingles(w: number): Set<string> {
    this.shingleSets ??= new Map();
    let set = this.shingleSets.get(w);
    if (!set) this.shingleSets.set(w, (set = new Set(shingleBag(this.words(), w).keys())));
    return set;
  }
  sketch(w: number, k: number): Sketch {
    this.sketches ??= new Map();
    const key = `${w}/${k}`;
    let sketch = this.sketches.get(key);
    // The shingle set is not kept for this: MinHash is for turns too large to hold sets of.
    if (!sketch) this.sketches.set(key, (sketch = bottomKSketch(this.shingleSets?.get(w) ?? shingleBag(this.words(), w).keys(), k)));
    return sketch;
  }
}

/**
 * A TextSource memoised by text content: at most 2 × `limit` texts held, none longer than
 * `maxChars` (longer ones are computed afresh, so one huge text cannot pin a huge entry).
 */
export function memoTexts(limit: number, maxChars = 65_536): TextSource & { readonly memo: GenerationalMemo<string, unknown> } {
  const memo = new GenerationalMemo<string, Facts>(2 * limit);
  const facts = (text: string): Facts => (text.length > maxChars ? new Facts(text) : memo.getOr(text, (t) => new Facts(t)));
  return {
    memo,
    words: (text) => facts(text).words(),
    terms: (text) => facts(text).terms(),
    squad: (text) => facts(text).squad(),
    shingles: (text, w) => facts(text).shingles(w),
    sketch: (text, w, k) => facts(text).sketch(w, k),
  };
}

/**
 * The memo `analyseTurn` uses across records. 4096 texts per generation: a few hundred bytes of
 * text plus its word list, term and token counts and shingle set each, some tens of MB at most.
 */
export const sharedTexts = memoTexts(4096);
