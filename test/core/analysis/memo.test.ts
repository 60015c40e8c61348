import { describe, expect, it } from 'vitest';
import { TextMemo } from '../../../extension/core/analysis/memo';

describe('TextMemo: two generations, bounded', () => {
  it('makes a value once per key while it is held', () => {
    const memo = new TextMemo<number>(4);
    let made = 0;
    const make = (k: string): number => (made++, k.length);
    expect(memo.get('abc', make)).toBe(3);
    expect(memo.get('abc', make)).toBe(3);
    expect(made).toBe(1);
  });

  it('never holds more than twice the limit, and forgets the oldest generation', () => {
    const memo = new TextMemo<string>(3);
    const made: string[] = [];
    const make = (k: string): string => (made.push(k), k.toUpperCase());
    for (let i = 0; i < 100; i++) {
      memo.get(`k${i}`, make);
      expect(memo.size).toBeLessThanOrEqual(6);
    }
    // Limit 3: k96..k98 filled a generation, k99 swapped it to "previous" and started a new one.
    // So k96..k99 are held; k95 was in the generation dropped at that swap.
    made.length = 0;
    for (const k of ['k96', 'k97', 'k98', 'k99']) memo.get(k, make);
    expect(made).toEqual([]);
    memo.get('k95', make);
    expect(made).toEqual(['k95']);
  });

  it('carries a hit in the previous generation forward', () => {
    const memo = new TextMemo<number>(2);
    let made = 0;
    const make = (): number => ++made;
    memo.get('a', make); // current {a}
    memo.get('b', make); // current {a, b}
    memo.get('c', make); // full: previous {a, b}, current {c}
    expect(memo.get('a', make)).toBe(1); // from previous, copied into current {c, a}
    memo.get('d', make); // full: previous {c, a}, current {d}; b is gone
    expect(memo.get('a', make)).toBe(1);
    expect(made).toBe(4); // a, b, c, d
    expect(memo.get('b', make)).toBe(5); // made again
  });

  it('keys are whole texts: equal content hits, any difference misses', () => {
    const memo = new TextMemo<string>(8);
    const text = 'Night buses run hourly.';
    expect(memo.get(text, (k) => k)).toBe(text);
    // The same content as a different string object is a hit.
    expect(memo.get(['Night buses', 'run hourly.'].join(' '), () => 'miss')).toBe(text);
    expect(memo.get('Night buses run hourly!', () => 'miss')).toBe('miss');
  });

  it('clear() empties it; a bad limit is refused', () => {
    const memo = new TextMemo<number>(2);
    memo.get('a', () => 1);
    memo.clear();
    expect(memo.size).toBe(0);
    expect(memo.get('a', () => 2)).toBe(2);
    expect(() => new TextMemo(0)).toThrow(/positive integer/);
    expect(() => new TextMemo(1.5)).toThrow(/positive integer/);
  });
});
