import { describe, expect, it } from 'vitest';
import { GenerationalMemo } from '../../../extension/core/cache/generational';

describe('GenerationalMemo', () => {
  it('never holds more than its capacity', () => {
    const m = new GenerationalMemo<number, number>(10);
    for (let i = 0; i < 1000; i++) {
      m.set(i, i * 2);
      expect(m.size).toBeLessThanOrEqual(10);
    }
  });

  it('keeps an entry that is read in every generation, drops one that is not', () => {
    // capacity 4 → generations of 2 entries. Key 0 is read after each new key is added.
    const m = new GenerationalMemo<string, number>(4);
    m.set('keep', 1);
    m.set('lost', 2);
    for (let i = 0; i < 20; i++) {
      m.set(`k${i}`, i);
      expect(m.get('keep')).toBe(1);
    }
    expect(m.get('lost')).toBeUndefined();
  });

  it('returns what was stored and updates values in place', () => {
    const m = new GenerationalMemo<string, number>(100);
    m.set('a', 1);
    m.set('b', 2);
    m.set('a', 3);
    expect(m.get('a')).toBe(3);
    expect(m.get('b')).toBe(2);
    expect(m.get('c')).toBeUndefined();
    expect(m.size).toBe(2);
  });

  it('an entry in the old generation is promoted, not duplicated', () => {
    // capacity 4: 'a','b' fill the young map; adding 'c' moves them to the old one.
    const m = new GenerationalMemo<string, number>(4);
    m.set('a', 1);
    m.set('b', 2);
    m.set('c', 3);
    expect(m.size).toBe(3);
    expect(m.get('a')).toBe(1); // promoted: old {b}, young {c, a}
    expect(m.size).toBe(3);
    m.set('b', 20); // from old to young: the young map is full (2), so it becomes old: old {c, a}, young {b}
    expect(m.size).toBe(3);
    expect(m.get('b')).toBe(20);
  });

  it('getOr makes a value once per key while it is held', () => {
    const m = new GenerationalMemo<string, number>(10);
    let made = 0;
    const make = (k: string): number => (made++, k.length);
    expect(m.getOr('abc', make)).toBe(3);
    expect(m.getOr('abc', make)).toBe(3);
    expect(m.getOr('de', make)).toBe(2);
    expect(made).toBe(2);
  });

  it('rejects a capacity below 2', () => {
    expect(() => new GenerationalMemo(1)).toThrow(RangeError);
  });
});
