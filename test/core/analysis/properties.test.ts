import fc from 'fast-check';
import { beforeAll, describe, expect, it } from 'vitest';
import { f1Score } from '../../../extension/core/analysis/f1';
import { kendallTauB } from '../../../extension/core/analysis/bm25';
import { bottomKSketch, containment, loadShingleHasher, resemblance, shingleSet, sketchResemblance } from '../../../extension/core/analysis/shingles';

// Properties that follow from the definitions (not from our code): F1 is symmetric and in [0, 1];
// resemblance is symmetric, 1 on identical texts, never above either containment; tau-b is
// antisymmetric under reversal; a bottom-k sketch that holds the whole union is exact.
const word = fc.constantFrom('bus', 'tram', 'the', 'a', 'fare', 'zone', 'night', 'pass', 'ferry', 'free');
const text = fc.array(word, { maxLength: 30 }).map((ws) => ws.join(' '));

describe('definitional properties', () => {
  it('F1 is symmetric and within [0, 1]', () => {
    fc.assert(
      fc.property(text, text, (a, b) => {
        const f = f1Score(a, b);
        expect(f).toBeGreaterThanOrEqual(0);
        expect(f).toBeLessThanOrEqual(1);
        expect(f).toBeCloseTo(f1Score(b, a), 12);
      }),
    );
  });
  it('resemblance is symmetric and bounded by both containments', () => {
    fc.assert(
      fc.property(text, text, fc.integer({ min: 1, max: 4 }), (a, b, w) => {
        const r = resemblance(a, b, w);
        expect(r).toBeCloseTo(resemblance(b, a, w), 12);
        expect(r).toBeLessThanOrEqual(containment(a, b, w) + 1e-12);
        expect(r).toBeLessThanOrEqual(containment(b, a, w) + 1e-12);
        if (shingleSet(a, w).size > 0) expect(resemblance(a, a, w)).toBe(1);
      }),
    );
  });
  it('tau-b of a reversed ranking is the negation', () => {
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 0, max: 5 }), { minLength: 2, maxLength: 12 }), (ys) => {
        const xs = ys.map((_, i) => i);
        const t = kendallTauB(xs, ys);
        const u = kendallTauB(xs, ys.map((y) => -y));
        if (t === null) expect(u).toBeNull();
        else expect(u).toBeCloseTo(-t, 12);
      }),
    );
  });
});

describe('bottom-k sketch', () => {
  beforeAll(async () => {
    await loadShingleHasher();
  });
  it('equals the exact resemblance when k covers the union (no sampling left)', () => {
    fc.assert(
      fc.property(text, text, (a, b) => {
        const sa = shingleSet(a, 2);
        const sb = shingleSet(b, 2);
        const k = sa.size + sb.size + 1;
        // Distinct word pairs from a 10-word vocabulary: xxHash32 collisions are not a concern here.
        expect(sketchResemblance(bottomKSketch(sa, k), bottomKSketch(sb, k), k)).toBeCloseTo(resemblance(a, b, 2), 12);
      }),
    );
  });
});
