import fc from 'fast-check';
import MiniSearch from 'minisearch';
import { describe, expect, it } from 'vitest';
import { BM25_PARAMS, bm25Scorer } from '../../../extension/core/analysis/bm25';
import { words } from '../../../extension/core/analysis/normalize';
import { memoTexts } from '../../../extension/core/analysis/textfacts';

/**
 * The reference: a real minisearch 7.2.0 index, searched as bm25.ts documents (each distinct query
 * term of the collection once, boosted by its count, 32 terms per search, each hit's score divided
 * by its number of matched query terms, the chunks summed).
 */
function minisearchScores(docs: readonly { id: string; text: string }[], query: string): Map<string, number> {
  const index = new MiniSearch<{ id: number; text: string }>({
    fields: ['text'],
    tokenize: (text) => words(text),
    processTerm: (term) => term,
    searchOptions: { bm25: { ...BM25_PARAMS } },
  });
  index.addAll(docs.map((doc, i) => ({ id: i, text: doc.text })));
  const vocabulary = new Set(docs.flatMap((doc) => words(doc.text)));
  const scores = new Map(docs.map((doc) => [doc.id, 0]));
  const counts = new Map<string, number>();
  for (const t of words(query)) if (vocabulary.has(t)) counts.set(t, (counts.get(t) ?? 0) + 1);
  const terms = [...counts.keys()];
  for (let at = 0; at < terms.length; at += 32) {
    for (const hit of index.search(terms.slice(at, at + 32).join(' '), { boostTerm: (term) => counts.get(term) ?? 1 })) {
      const id = docs[hit.id as number]!.id;
      scores.set(id, scores.get(id)! + hit.score / Math.max(1, hit.queryTerms.length));
    }
  }
  return scores;
}

// A small vocabulary so documents share terms, with case, punctuation and non-ASCII letters.
const VOCAB = ['bus', 'Bus', 'tram', 'fare', 'pass', 'day', 'night', 'the', 'a', 'ferry', 'Zone', 'B', 'café', 'İstanbul', 'ΣΟΦΊΑ', 'don’t', '5', '£3.20', 'step-free', 'ramp'];
const extra = Array.from({ length: 60 }, (_, i) => `w${i}`); // enough distinct terms for several chunks
const text = fc
  .array(fc.oneof(fc.constantFrom(...VOCAB), fc.constantFrom(...extra), fc.string({ maxLength: 6 })), { maxLength: 80 })
  .chain((ws) => fc.constantFrom(' ', ', ', '. ', ' — ').map((sep) => ws.join(sep)));

describe('bm25Scorer gives minisearch 7.2.0 figures bit for bit', () => {
  it('on random collections and queries (plain and memoised term counts)', () => {
    const memo = memoTexts(16);
    fc.assert(
      fc.property(fc.array(text, { maxLength: 8 }), text, (texts, query) => {
        const docs = texts.map((t, i) => ({ id: `d${i}`, text: t }));
        const expected = minisearchScores(docs, query);
        for (const got of [bm25Scorer(docs)(query), bm25Scorer(docs, memo, memo)(query)]) {
          expect([...got.keys()]).toEqual([...expected.keys()]);
          for (const [id, score] of expected) expect(Object.is(got.get(id), score), `${id}: ${got.get(id)} vs ${score}`).toBe(true);
        }
      }),
      { numRuns: 300 },
    );
  });

  it('a query with more than 32 distinct collection terms (three chunks), each term repeated', () => {
    const docs = [
      { id: 'x', text: extra.slice(0, 50).join(' ') },
      { id: 'y', text: extra.slice(20, 70).join(' ') + ' bus bus' },
      { id: 'z', text: 'tram' },
    ];
    const query = [...extra, ...extra.slice(0, 10), 'bus'].join(' ');
    const expected = minisearchScores(docs, query);
    const got = bm25Scorer(docs)(query);
    for (const [id, score] of expected) expect(Object.is(got.get(id), score)).toBe(true);
    expect(got.get('z')).toBe(0);
  });
});
