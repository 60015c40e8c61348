import { describe, expect, it } from 'vitest';
import { SharedCounts } from '../../../extension/core/tokens/sharedCounts';

describe('SharedCounts', () => {
  it('returns a stored count for the same hash, length and encoding only', () => {
    const s = SharedCounts.create(['cl100k_base', 'o200k_base'], 64);
    s.set('cl100k_base', 0x12345678, -5, 300, 71);
    expect(s.get('cl100k_base', 0x12345678, -5, 300)).toBe(71);
    expect(s.get('cl100k_base', 0x12345678, -5, 301)).toBeUndefined(); // other length
    expect(s.get('cl100k_base', 0x12345679, -5, 300)).toBeUndefined(); // other hash
    expect(s.get('o200k_base', 0x12345678, -5, 300)).toBeUndefined(); // other encoding
    expect(s.get('p50k_base', 0x12345678, -5, 300)).toBeUndefined(); // no table
  });

  it('keeps colliding keys apart (same home slot, linear probing)', () => {
    // hi = 0 makes the home slot lo & 63: lo = 1, 65 and 129 all start at slot 1.
    const s = SharedCounts.create(['cl100k_base'], 64);
    s.set('cl100k_base', 0, 1, 10, 1);
    s.set('cl100k_base', 0, 65, 10, 2);
    s.set('cl100k_base', 0, 129, 10, 3);
    expect([s.get('cl100k_base', 0, 1, 10), s.get('cl100k_base', 0, 65, 10), s.get('cl100k_base', 0, 129, 10)]).toEqual([1, 2, 3]);
    expect(s.entries()).toBe(3);
  });

  it('the first writer wins and a repeated key takes no new slot', () => {
    const s = SharedCounts.create(['cl100k_base'], 64);
    s.set('cl100k_base', 7, 7, 50, 9);
    s.set('cl100k_base', 7, 7, 50, 9);
    expect(s.entries()).toBe(1);
  });

  it('stops taking entries at 3/4 full (16 slots → 12 entries)', () => {
    const s = SharedCounts.create(['cl100k_base'], 16);
    for (let i = 0; i < 40; i++) s.set('cl100k_base', 0, i, 100, i + 1);
    expect(s.entries()).toBe(12);
    for (let i = 0; i < 12; i++) expect(s.get('cl100k_base', 0, i, 100)).toBe(i + 1);
    expect(s.get('cl100k_base', 0, 39, 100)).toBeUndefined();
  });

  it('another view of the same buffers sees the entries (what a worker gets)', () => {
    const a = SharedCounts.create(['o200k_base'], 32);
    const b = SharedCounts.attach(structuredClone(a.shared));
    a.set('o200k_base', 1, 2, 3, 4);
    expect(b.get('o200k_base', 1, 2, 3)).toBe(4);
  });

  it('rejects a table size that is not a power of two', () => {
    expect(() => SharedCounts.create(['cl100k_base'], 100)).toThrow(RangeError);
  });
});
