import { describe, expect, it } from 'vitest';
import { positionCheck, thirdOf } from '../../../extension/core/analysis/position';
import { ageInDays, isStale, parseIsoTime } from '../../../extension/core/analysis/staleness';

describe('thirdOf: first ⌊n/3⌋ (≥ 1) positions, last ⌊n/3⌋ (≥ 1), middle the rest', () => {
  it('n = 9 splits 3/3/3', () => {
    expect([1, 2, 3, 4, 5, 6, 7, 8, 9].map((p) => thirdOf(p, 9))).toEqual(['first', 'first', 'first', 'middle', 'middle', 'middle', 'last', 'last', 'last']);
  });
  it('n = 5: ends are positions 1 and 5, middle 2–4; n = 2 has no middle', () => {
    expect([1, 2, 3, 4, 5].map((p) => thirdOf(p, 5))).toEqual(['first', 'middle', 'middle', 'middle', 'last']);
    expect([1, 2].map((p) => thirdOf(p, 2))).toEqual(['first', 'last']);
    expect(() => thirdOf(0, 3)).toThrow();
  });
});

describe('positionCheck (Liu et al., TACL 2024: the middle of a long block is the risky place)', () => {
  const sent = ['a', 'b', 'c', 'd', 'e', 'f'].map((id) => ({ id, keptTokens: 10 }));
  const before = [5, 15, 25, 35, 45, 55];
  it('flags the middle third of a long block', () => {
    expect(positionCheck('c', sent, before, 5)).toEqual({ best: 'c', position: 3, of: 6, third: 'middle', tokensBefore: 25, long: true, flagged: true });
  });
  it('does not flag the ends, nor a short block', () => {
    expect(positionCheck('f', sent, before, 5).flagged).toBe(false);
    expect(positionCheck('c', sent, before, 7)).toMatchObject({ third: 'middle', long: false, flagged: false });
    expect(positionCheck(null, sent, before, 5)).toMatchObject({ best: null, position: null, flagged: false });
  });
});

describe('staleness', () => {
  it('ages in days from ISO dates only', () => {
    // 2025-11-30 → 2026-11-30 is 365 days (2026 is not a leap year and Feb 2026 is inside)
    expect(ageInDays('2025-11-30', '2026-11-30')).toBe(365);
    expect(ageInDays('2026-11-29T12:00:00Z', '2026-11-30T00:00:00Z')).toBe(0.5);
    expect(ageInDays('last spring', '2026-11-30')).toBeNull();
    expect(parseIsoTime('30/11/2026')).toBeNull();
  });
  it('stale strictly after the limit', () => {
    expect(isStale(365, 365)).toBe(false);
    expect(isStale(365.5, 365)).toBe(true);
    expect(isStale(null, 365)).toBe(false);
  });
});
