/**
 * Lexical relevance with minisearch's BM25+ (minisearch 7.2.0, `calcBM25Score` in
 * src/MiniSearch.ts), Lv & Zhai 2011's BM25+ with the idf of Robertson & Zaragoza 2009:
 *
 *   BM25+(q, d) = Σ_{t in q}  idf(t) · ( δ + tf(t,d)·(k1 + 1) / ( tf(t,d) + k1·(1 − b + b·|d|/avgdl) ) )
 *   idf(t)      = ln( 1 + (N − n(t) + 0.5) / (n(t) + 0.5) )
 *
 * with minisearch's defaults k1 = 1.2, b = 0.7, δ = 0.5. N is the number of documents indexed
 * (the turn's passages), n(t) how many contain t. Two minisearch particulars, both documented in
 * docs/grounding.md: |d| is the number of *distinct* terms of d (minisearch stores
 * `new Set(tokens).size`), and the sum runs over the query's tokens with repeats. minisearch
 * multiplies the summed score by the number of distinct query terms matched (a coordination
 * factor); `bm25Scores` divides that back out so the figure is the BM25+ sum above.
 */
import MiniSearch from 'minisearch';
import { words } from './normalize';

export const BM25_PARAMS = { k: 1.2, b: 0.7, d: 0.5 } as const;

/** Distinct query terms per minisearch search (see `bm25Scorer`). */
const QUERY_CHUNK = 32;

/** BM25+ score of every doc against `query` (0 for docs sharing no term). Ids must be unique. */
export function bm25Scores(query: string, docs: readonly { id: string; text: string }[]): Map<string, number> {
  return bm25Scorer(docs)(query);
}

/**
 * Index `docs` once and score any number of queries against them (a turn scores its passages
 * against both the query and the reply). `tokenize` lets a caller share memoised word lists.
 */
export function bm25Scorer(docs: readonly { id: string; text: string }[], tokenize: (text: string) => string[] = words): (query: string) => Map<string, number> {
  const seen = new Set<string>();
  for (const doc of docs) {
    if (seen.has(doc.id)) throw new Error(`bm25Scores: duplicate document id "${doc.id}"`);
    seen.add(doc.id);
  }
  // Every term of the collection: query terms outside it score 0 and are not searched at all
  // (minisearch's per-term search overhead dominates for a long reply used as the query).
  const vocabulary = new Set<string>();
  for (const doc of docs) for (const t of tokenize(doc.text)) vocabulary.add(t);
  const index = new MiniSearch<{ id: number; text: string }>({
    fields: ['text'],
    tokenize: (text) => tokenize(text),
    processTerm: (term) => term,
    searchOptions: { bm25: { ...BM25_PARAMS } },
  });
  // Numeric ids inside the index: passage ids are arbitrary strings from the log.
  index.addAll(docs.map((doc, i) => ({ id: i, text: doc.text })));
  return (query) => {
    const scores = new Map<string, number>();
    for (const doc of docs) scores.set(doc.id, 0);
    if (docs.length === 0) return scores;
    // Search each distinct term once, boosted by its count: the same sum as repeating it. Terms go
    // in chunks because minisearch merges matched terms with Array#includes (quadratic in the
    // number of distinct terms a document matches); BM25+ is a sum over query terms, so the
    // chunk scores (each divided by its own coordination factor) add up to the same figure.
    const counts = new Map<string, number>();
    for (const t of tokenize(query)) if (vocabulary.has(t)) counts.set(t, (counts.get(t) ?? 0) + 1);
    const boostTerm = (term: string): number => counts.get(term) ?? 1;
    const terms = [...counts.keys()];
    for (let at = 0; at < terms.length; at += QUERY_CHUNK) {
      for (const hit of index.search(terms.slice(at, at + QUERY_CHUNK).join(' '), { boostTerm })) {
        const doc = docs[hit.id as number];
        // minisearch multiplies by the number of distinct query terms matched; divide it back out.
        if (doc) scores.set(doc.id, scores.get(doc.id)! + hit.score / Math.max(1, hit.queryTerms.length));
      }
    }
    return scores;
  };
}

/**
 * Kendall's tau-b (ties in either ranking allowed; Kendall 1945):
 *   tau_b = (C − D) / sqrt((n0 − n1)(n0 − n2)), n0 = n(n−1)/2,
 * n1 / n2 the pairs tied in x / in y. Both inputs are "smaller is better" ranks or any numbers
 * compared the same way. Null when n < 2 or a ranking is constant. O(n²): n is passages per turn.
 */
export function kendallTauB(x: readonly number[], y: readonly number[]): number | null {
  if (x.length !== y.length) throw new Error('kendallTauB: inputs differ in length');
  const n = x.length;
  if (n < 2) return null;
  let concordant = 0;
  let discordant = 0;
  let tiesX = 0;
  let tiesY = 0;
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const dx = Math.sign(x[i]! - x[j]!);
      const dy = Math.sign(y[i]! - y[j]!);
      if (dx === 0) tiesX++;
      if (dy === 0) tiesY++;
      if (dx !== 0 && dy !== 0) {
        if (dx === dy) concordant++;
        else discordant++;
      }
    }
  }
  const n0 = (n * (n - 1)) / 2;
  const denominator = Math.sqrt((n0 - tiesX) * (n0 - tiesY));
  return denominator === 0 ? null : (concordant - discordant) / denominator;
}

/** 1-based competition ranks by score, highest first ("1224": ties share the better rank). */
export function ranksByScore(scores: readonly number[]): number[] {
  return scores.map((s) => 1 + scores.filter((t) => t > s).length);
}
