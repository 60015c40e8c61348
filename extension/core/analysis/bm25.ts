/**
 * Lexical relevance with minisearch's BM25+ (minisearch 7.2.0, `calcBM25Score` in
 * src/MiniSearch.ts; computed here as minisearch computes it, see `bm25Scorer`), Lv & Zhai 2011's BM25+ with the idf of Robertson & Zaragoza 2009:
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
import { plainTexts, type TextSource } from './textfacts';

export const BM25_PARAMS = { k: 1.2, b: 0.7, d: 0.5 } as const;

/** Distinct query terms per minisearch search (see `bm25Scorer`). */
const QUERY_CHUNK = 32;

/** BM25+ score of every doc against `query` (0 for docs sharing no term). Ids must be unique. */
export function bm25Scores(query: string, docs: readonly { id: string; text: string }[]): Map<string, number> {
  return bm25Scorer(docs)(query);
}

/**
 * Index `docs` once and score any number of queries against them (a turn scores its passages
 * against both the query and the reply). `texts` (documents) and `queryTexts` let a caller share
 * memoised term counts.
 *
 * The figures are minisearch 7.2.0's, floating-point operation for floating-point operation (a
 * test compares them bit for bit with a minisearch index), computed here without its per-search
 * overhead: an index `{ fields: ['text'], tokenize: words, processTerm: identity }` with every
 * doc added in order, searched with each distinct query term boosted by its count, in chunks of
 * QUERY_CHUNK terms (as we used to search it: minisearch merges matched terms with
 * Array#includes, quadratic in the terms a document matches), each chunk's score divided by its
 * coordination factor, the chunks summed. Specifically, minisearch
 * - keeps |d| = distinct terms of d and avgdl as the running mean avg_n = (avg_(n−1)·(n−1) + |d_n|)/n;
 * - scores a matched term as boost · idf · (δ + tf·(k1+1)/(tf + k1·(1 − b + b·|d|/avgdl)));
 * - adds a chunk's term scores per doc left to right in query-term order, multiplies the sum by
 *   the number q of chunk terms the doc matched; we divide by q again (not a no-op in floating point).
 */
export function bm25Scorer(
  docs: readonly { id: string; text: string }[],
  texts: Pick<TextSource, 'terms'> = plainTexts,
  queryTexts: Pick<TextSource, 'terms'> = texts,
): (query: string) => Map<string, number> {
  const seen = new Set<string>();
  for (const doc of docs) {
    if (seen.has(doc.id)) throw new Error(`bm25Scores: duplicate document id "${doc.id}"`);
    seen.add(doc.id);
  }
  const n = docs.length;
  const termCounts = docs.map((doc) => texts.terms(doc.text));
  let avgLength = 0;
  termCounts.forEach((t, count) => {
    avgLength = (avgLength * count + t.size) / (count + 1);
  });
  // n(t) for every term of the collection: query terms outside it score 0 and are skipped.
  const docFrequency = new Map<string, number>();
  for (const t of termCounts) for (const term of t.keys()) docFrequency.set(term, (docFrequency.get(term) ?? 0) + 1);
  const { k, b, d } = BM25_PARAMS;
  const sums = new Float64Array(n);
  const matched = new Int32Array(n);
  return (query) => {
    const scores = new Map<string, number>();
    for (const doc of docs) scores.set(doc.id, 0);
    if (n === 0) return scores;
    const terms: string[] = [];
    const queryCounts = queryTexts.terms(query);
    for (const term of queryCounts.keys()) if (docFrequency.has(term)) terms.push(term);
    for (let at = 0; at < terms.length; at += QUERY_CHUNK) {
      sums.fill(0);
      matched.fill(0);
      for (const term of terms.slice(at, at + QUERY_CHUNK)) {
        const boost = queryCounts.get(term)!;
        const matching = docFrequency.get(term)!;
        const invDocFreq = Math.log(1 + (n - matching + 0.5) / (matching + 0.5));
        for (let i = 0; i < n; i++) {
          const t = termCounts[i]!;
          const tf = t.get(term);
          if (tf === undefined) continue;
          const raw = invDocFreq * (d + (tf * (k + 1)) / (tf + k * (1 - b + (b * t.size) / avgLength)));
          const weighted = boost * raw;
          sums[i] = matched[i] === 0 ? weighted : sums[i]! + weighted;
          matched[i]!++;
        }
      }
      for (let i = 0; i < n; i++) {
        const q = matched[i]!;
        if (q > 0) scores.set(docs[i]!.id, scores.get(docs[i]!.id)! + (sums[i]! * q) / q);
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
