import { beforeAll, describe, expect, it } from 'vitest';
import {
  bottomKSketch,
  containment,
  loadShingleHasher,
  nearDuplicates,
  resemblance,
  shingleSet,
  sketchResemblance,
} from '../../../extension/core/analysis/shingles';

// Source: A. Z. Broder, "On the resemblance and containment of documents", Compression and
// Complexity of SEQUENCES 1997, section 2. The paper's example: A = (a,rose,is,a,rose,is,a,rose),
// B = (a,rose,is,a,flower,which,is,a,rose). It states: under Option A (labelled shingles) A resembles
// B 70% for shingle size 1, 50% for size 2, 30% for size 3; under Option B (a set of shingles)
// 60%, 50%, 42.85%. (Checked against a stored copy of the paper's text, not recalled.) The paper
// gives no containment figures for this pair: those below are worked by hand.
const A = 'a rose is a rose is a rose';
const B = 'a rose is a flower which is a rose';

describe("Broder's rose example", () => {
  it("the paper's 4-shingling of A (Option B set)", () => {
    expect([...shingleSet(A, 4)].sort()).toEqual(['a rose is a', 'is a rose is', 'rose is a rose']);
  });

  it('Option B (set) resemblance: 60%, 50%, 42.85% for w = 1, 2, 3', () => {
    // w=1: S(A) = {a, rose, is}; S(B) = {a, rose, is, flower, which}; ∩ = 3, ∪ = 5 → 3/5
    expect([...shingleSet(A, 1)].sort()).toEqual(['a', 'is', 'rose']);
    expect([...shingleSet(B, 1)].sort()).toEqual(['a', 'flower', 'is', 'rose', 'which']);
    expect(resemblance(A, B, 1)).toBeCloseTo(3 / 5, 12);
    // w=2: S(A) = {a rose, rose is, is a}; S(B) = {a rose, rose is, is a, a flower, flower which, which is}
    //      ∩ = 3, ∪ = 6 → 3/6
    expect([...shingleSet(B, 2)].sort()).toEqual(['a flower', 'a rose', 'flower which', 'is a', 'rose is', 'which is']);
    expect(resemblance(A, B, 2)).toBeCloseTo(3 / 6, 12);
    // w=3: S(A) = {a rose is, rose is a, is a rose}
    //      S(B) = {a rose is, rose is a, is a flower, a flower which, flower which is, which is a, is a rose}
    //      ∩ = 3, ∪ = 7 → 3/7 = 0.428571… (the paper's 42.85%)
    expect(shingleSet(B, 3).size).toBe(7);
    expect(resemblance(A, B, 3)).toBeCloseTo(3 / 7, 12);
    expect(Math.floor(resemblance(A, B, 3) * 10_000) / 100).toBe(42.85); // the paper's figure, truncated
  });

  it('Option A (labelled) resemblance: 70%, 50%, 30% for w = 1, 2, 3', () => {
    // w=1: bags A = {a×3, rose×3, is×2} (8), B = {a×3, rose×2, is×2, flower, which} (9)
    //      ∩ = 3 + 2 + 2 = 7, ∪ = 8 + 9 − 7 = 10 → 7/10
    expect(resemblance(A, B, 1, 'labelled')).toBeCloseTo(0.7, 12);
    // w=2: A = {a rose×3, rose is×2, is a×2} (7); B = {a rose×2, rose is, is a×2, a flower, flower which, which is} (8)
    //      ∩ = 2 + 1 + 2 = 5, ∪ = 7 + 8 − 5 = 10 → 5/10
    expect(resemblance(A, B, 2, 'labelled')).toBeCloseTo(0.5, 12);
    // w=3: A = {a rose is×2, rose is a×2, is a rose×2} (6); B has 7 trigrams, each once
    //      ∩ = 1 + 1 + 1 = 3, ∪ = 6 + 7 − 3 = 10 → 3/10
    expect(resemblance(A, B, 3, 'labelled')).toBeCloseTo(0.3, 12);
  });

  it('containment, by hand from the same shingle sets', () => {
    // Option B: every shingle of A is in B for w = 1, 2, 3 → c(A,B) = 1; c(B,A) = 3/5, 3/6, 3/7
    for (const w of [1, 2, 3]) expect(containment(A, B, w)).toBe(1);
    expect(containment(B, A, 1)).toBeCloseTo(3 / 5, 12);
    expect(containment(B, A, 2)).toBeCloseTo(3 / 6, 12);
    expect(containment(B, A, 3)).toBeCloseTo(3 / 7, 12);
    // Option A: c(A,B) = ∩/|A| = 7/8, 5/7, 3/6; c(B,A) = 7/9, 5/8, 3/7
    expect(containment(A, B, 1, 'labelled')).toBeCloseTo(7 / 8, 12);
    expect(containment(A, B, 2, 'labelled')).toBeCloseTo(5 / 7, 12);
    expect(containment(A, B, 3, 'labelled')).toBeCloseTo(3 / 6, 12);
    expect(containment(B, A, 1, 'labelled')).toBeCloseTo(7 / 9, 12);
  });

  it('r(A, A) = 1; a contiguous part is fully contained (both stated in the paper)', () => {
    expect(resemblance(A, A, 3)).toBe(1);
    expect(containment('rose is a flower', B, 3)).toBe(1);
  });

  it('a text shorter than w is one shingle of all its words (our choice); empty texts resemble nothing', () => {
    expect([...shingleSet('night bus', 3)]).toEqual(['night bus']);
    expect(resemblance('Night bus.', 'night bus', 3)).toBe(1);
    expect(resemblance('', '', 3)).toBe(0);
    expect(() => shingleSet('x', 0)).toThrow(/positive integer/);
  });
});

describe('bottom-k MinHash (xxHash32 via xxhash-wasm)', () => {
  beforeAll(async () => {
    await loadShingleHasher();
  });
  const seq = (from: number, to: number): string => Array.from({ length: to - from }, (_, i) => `t${from + i}`).join(' ');

  it('estimates a known resemblance within 3 standard errors', () => {
    // A = t0..t999, B = t500..t1499 with w = 1: |A ∩ B| = 500, |A ∪ B| = 1500, r = 1/3.
    // Standard error of the bottom-k estimate ≈ sqrt(r(1 − r)/k) = sqrt((2/9)/128) ≈ 0.0417.
    const k = 128;
    const a = bottomKSketch(shingleSet(seq(0, 1000), 1), k);
    const b = bottomKSketch(shingleSet(seq(500, 1500), 1), k);
    expect(a.size).toBe(1000);
    expect(a.mins.length).toBe(k);
    expect(Math.abs(sketchResemblance(a, b, k) - 1 / 3)).toBeLessThan(3 * Math.sqrt(2 / 9 / k));
  });
  it('is exact at the ends: identical sets give 1, disjoint sets 0', () => {
    const k = 64;
    const a = bottomKSketch(shingleSet(seq(0, 300), 2), k);
    expect(sketchResemblance(a, bottomKSketch(shingleSet(seq(0, 300), 2), k), k)).toBe(1);
    expect(sketchResemblance(a, bottomKSketch(shingleSet(seq(1000, 1300), 2), k), k)).toBe(0);
  });
});

describe('nearDuplicates', () => {
  const settings = { shingleWords: 3, duplicateResemblance: 0.5, duplicateContainment: 0.8, minhashAboveShingles: 20_000, minhashSize: 128 };
  const P1 = 'Night buses run every 30 minutes between midnight and 5 am from Central Station.';
  const P2 = 'Monthly passes cost 62 dollars for adults and are sold at every station.';
  const P1b = 'Night buses run every 30 minutes between midnight and 5 am from Central Station!';

  it('pairs a repeat with the better-ranked original and counts the later copy as waste', () => {
    const check = nearDuplicates(
      [
        { id: 'p1', text: P1, keptTokens: 18 },
        { id: 'p2', text: P2, keptTokens: 15 },
        { id: 'p3', text: P1b, keptTokens: 18 },
      ],
      settings,
    );
    expect(check.method).toBe('exact');
    expect(check.pairs).toEqual([{ a: 'p1', b: 'p3', resemblance: 1, containmentAB: 1, containmentBA: 1, wastedTokens: 18 }]);
    expect(check.wastedTokens).toBe(18);
  });
  it('no waste when the better copy was not sent, and each wasted passage counts once', () => {
    const check = nearDuplicates(
      [
        { id: 'p1', text: P1, keptTokens: 0 },
        { id: 'p2', text: P1, keptTokens: 18 },
        { id: 'p3', text: P1, keptTokens: 18 },
      ],
      settings,
    );
    // pairs (p1,p2) waste 0 (p1 dropped), (p1,p3) waste 0, (p2,p3) waste 18 → p3 once
    expect(check.pairs.map((p) => [p.a, p.b, p.wastedTokens])).toEqual([
      ['p1', 'p2', 0],
      ['p1', 'p3', 0],
      ['p2', 'p3', 18],
    ]);
    expect(check.wastedTokens).toBe(18);
  });
  it('flags containment of a short passage inside a longer one', () => {
    // S(short, 3) = {night buses run, buses run every, run every 30, every 30 minutes}: all in P1 → c = 1
    const check = nearDuplicates(
      [
        { id: 'long', text: P1, keptTokens: 18 },
        { id: 'short', text: 'Night buses run every 30 minutes.', keptTokens: 8 },
      ],
      settings,
    );
    expect(check.pairs).toHaveLength(1);
    expect(check.pairs[0]!.containmentBA).toBe(1);
    // P1 has 14 words → 12 distinct trigrams; the short one 6 words → 4, all in P1: r = 4/(12 + 4 − 4) = 1/3
    expect(check.pairs[0]!.resemblance).toBeCloseTo(1 / 3, 12);
    expect(check.pairs[0]!.containmentAB).toBeCloseTo(4 / 12, 12);
  });
  it('MinHash containment from r and exact set sizes stays within the 3-SE band', async () => {
    await loadShingleHasher();
    // A = t0..t999, B = t0..t499 (w = 1): exact r = 500/1000 = 0.5, c(B in A) = 1, c(A in B) = 0.5.
    // With k = 128, SE(r̂) = sqrt(0.25/128) ≈ 0.044, so r̂ ∈ [0.367, 0.633] within 3 SE. Then
    // ĉ(B,A) = min(1, r̂(1000 + 500)/((1 + r̂)·500)) = min(1, 3r̂/(1 + r̂)) ≥ 0.80, and
    // ĉ(A,B) = 1.5r̂/(1 + r̂) ∈ [0.40, 0.59].
    const seq = (n: number): string => Array.from({ length: n }, (_, i) => `t${i}`).join(' ');
    const check = nearDuplicates(
      [
        { id: 'A', text: seq(1000), keptTokens: 1 },
        { id: 'B', text: seq(500), keptTokens: 1 },
      ],
      { ...settings, shingleWords: 1, minhashAboveShingles: 100 },
    );
    expect(check.method).toBe('minhash');
    const pair = check.pairs[0]!;
    expect(Math.abs(pair.resemblance - 0.5)).toBeLessThan(3 * Math.sqrt(0.25 / 128));
    expect(pair.containmentBA).toBeGreaterThanOrEqual(0.8);
    expect(pair.containmentAB).toBeGreaterThanOrEqual(0.4);
    expect(pair.containmentAB).toBeLessThanOrEqual(0.59);
  });
  it('switches to MinHash above the shingle limit (when the hasher is loaded)', async () => {
    await loadShingleHasher();
    const check = nearDuplicates(
      [
        { id: 'p1', text: P1, keptTokens: 18 },
        { id: 'p2', text: P2, keptTokens: 15 },
        { id: 'p3', text: P1b, keptTokens: 18 },
      ],
      { ...settings, minhashAboveShingles: 10 },
    );
    expect(check.method).toBe('minhash');
    // Identical shingle sets have identical sketches: the estimate is exactly 1.
    expect(check.pairs.map((p) => [p.a, p.b, p.resemblance])).toEqual([['p1', 'p3', 1]]);
  });
});
