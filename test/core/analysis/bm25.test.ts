import { describe, expect, it } from 'vitest';
import { BM25_PARAMS, bm25Scores, kendallTauB, ranksByScore } from '../../../extension/core/analysis/bm25';

// Formula and parameters as documented in docs/grounding.md (minisearch 7.2.0 `calcBM25Score`;
// BM25+ of Lv & Zhai 2011 with the idf of Robertson & Zaragoza 2009):
//   score(q,d) = Σ_{t∈q} idf(t)·(δ + tf·(k1+1)/(tf + k1·(1 − b + b·|d|/avgdl)))
//   idf(t) = ln(1 + (N − n(t) + 0.5)/(n(t) + 0.5)),  k1 = 1.2, b = 0.7, δ = 0.5,
//   |d| = number of distinct terms of d.
describe('bm25Scores: three documents by hand', () => {
  const docs = [
    { id: 'd1', text: 'night bus fare' }, // distinct terms {night, bus, fare}: |d1| = 3
    { id: 'd2', text: 'bus fare bus' }, //   distinct terms {bus, fare}: |d2| = 2, tf(bus) = 2
    { id: 'd3', text: 'day pass' }, //       distinct terms {day, pass}: |d3| = 2
  ];
  // N = 3, avgdl = (3 + 2 + 2)/3 = 7/3. Query "night bus": n(night) = 1, n(bus) = 2.
  // idf(night) = ln(1 + (3 − 1 + 0.5)/(1 + 0.5)) = ln(1 + 2.5/1.5) = ln(8/3)
  // idf(bus)   = ln(1 + (3 − 2 + 0.5)/(2 + 0.5)) = ln(1 + 1.5/2.5) = ln(1.6)
  // d1: 1 − 0.7 + 0.7·3/(7/3) = 0.3 + 0.9 = 1.2, so k1·(…) = 1.44
  //     each term tf = 1: 0.5 + 1·2.2/(1 + 1.44) = 0.5 + 2.2/2.44
  //     score = (ln(8/3) + ln(1.6))·(0.5 + 2.2/2.44)
  // d2: 1 − 0.7 + 0.7·2/(7/3) = 0.3 + 0.6 = 0.9, so k1·(…) = 1.08
  //     bus tf = 2: 0.5 + 2·2.2/(2 + 1.08) = 0.5 + 4.4/3.08; night absent
  //     score = ln(1.6)·(0.5 + 4.4/3.08)
  // d3: no query term → 0
  const d1 = (Math.log(8 / 3) + Math.log(1.6)) * (0.5 + 2.2 / 2.44);
  const d2 = Math.log(1.6) * (0.5 + 4.4 / 3.08);

  it('uses the documented parameters', () => {
    expect(BM25_PARAMS).toEqual({ k: 1.2, b: 0.7, d: 0.5 });
  });
  it('matches the hand computation to 1e-6', () => {
    const scores = bm25Scores('night bus', docs);
    // Decimals for the reader: ln(8/3) = 0.980829253, ln(1.6) = 0.470003629, 2.2/2.44 = 0.901639344,
    // d1 = 1.450832882 × 1.401639344 = 2.033544450; d2 = 0.470003629 × 1.928571429 = 0.906435570
    expect(d1).toBeCloseTo(2.03354445, 7);
    expect(d2).toBeCloseTo(0.90643557, 7);
    expect(Math.abs(scores.get('d1')! - d1)).toBeLessThan(1e-6);
    expect(Math.abs(scores.get('d2')! - d2)).toBeLessThan(1e-6);
    expect(scores.get('d3')).toBe(0);
  });
  it('tokenises like the rest of the analysis (case and punctuation ignored)', () => {
    const scores = bm25Scores('NIGHT, bus?', docs);
    expect(Math.abs(scores.get('d1')! - d1)).toBeLessThan(1e-6);
  });
  it('a repeated query term counts once per occurrence', () => {
    // "bus bus" sums the bus term twice: d2 = 2·ln(1.6)·(0.5 + 4.4/3.08)
    const scores = bm25Scores('bus bus', docs);
    expect(Math.abs(scores.get('d2')! - 2 * d2)).toBeLessThan(1e-6);
  });
  it('rejects duplicate ids and handles an empty query', () => {
    expect(() => bm25Scores('x', [{ id: 'a', text: 'x' }, { id: 'a', text: 'y' }])).toThrow(/duplicate/);
    expect([...bm25Scores('', docs).values()]).toEqual([0, 0, 0]);
  });
});

describe('kendallTauB, hand-worked', () => {
  it('no ties: one discordant pair of six', () => {
    // retriever ranks 1,2,3,4; BM25 ranks 1,3,2,4. Pairs: (1,2) C, (1,3) C, (1,4) C, (2,3) D, (2,4) C, (3,4) C
    // C = 5, D = 1, n0 = 6, no ties: tau = (5 − 1)/6 = 2/3
    expect(kendallTauB([1, 2, 3, 4], [1, 3, 2, 4])).toBeCloseTo(2 / 3, 12);
  });
  it('ties in one ranking (tau-b denominator)', () => {
    // y = 1,2,2,4: pair (2,3) tied in y. C = 5, D = 0, n0 = 6, n1 = 0, n2 = 1
    // tau_b = 5 / sqrt(6·5) = 5/sqrt(30)
    expect(kendallTauB([1, 2, 3, 4], [1, 2, 2, 4])).toBeCloseTo(5 / Math.sqrt(30), 12);
  });
  it('reversed order is −1; constant or single input has no tau', () => {
    expect(kendallTauB([1, 2, 3], [3, 2, 1])).toBe(-1);
    expect(kendallTauB([1, 2, 3], [5, 5, 5])).toBeNull();
    expect(kendallTauB([1], [1])).toBeNull();
  });
  it('competition ranks by score, highest first', () => {
    expect(ranksByScore([0.2, 0.9, 0.2, 0])).toEqual([2, 1, 2, 4]);
  });
});
