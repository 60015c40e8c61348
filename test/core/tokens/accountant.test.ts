import { describe, expect, it } from 'vitest';
import { Accountant } from '../../../extension/core/tokens/accountant';
import { ref, refCount } from '../../support/reference';

/**
 * The accountant's shortcuts (two-generation memo, tiny map for roles, per-conversation carry of the
 * history's counts) must never change a count: every figure here is checked against the reference
 * encoder (tiktoken WASM), and the statistics show which path answered.
 */
const long = (tag: string): string => `${tag}: the night bus to Gullsmouth Pier leaves from stand C every twenty minutes after midnight, and the last ferry waits for it.`;

describe('Accountant', () => {
  it('counts equal the reference for tiny, short and long texts, memoised or not', async () => {
    const a = await Accountant.create();
    await a.encoder('o200k_base');
    const texts = ['system', 'user', 'Hi!', 'Which stop is nearest to the pier?', long('A'), long('B')];
    for (let round = 0; round < 2; round++) for (const t of texts) expect(a.count('o200k_base', t)).toBe(refCount('o200k_base', t));
    const s = a.stats();
    expect(s.misses).toBe(texts.length); // the second round was answered from memory
    expect(s.hits).toBe(texts.length);
  });

  it('countSegments carries a conversation’s history counts only while id and text are unchanged', async () => {
    const a = await Accountant.create();
    await a.encoder('cl100k_base');
    const turn1 = [
      { id: 't1-user', text: long('question one') },
      { id: 't1-assistant', text: long('answer one') },
    ];
    const first = a.countSegments('cl100k_base', 'conv-1', turn1);
    expect(first).toEqual(turn1.map((s) => refCount('cl100k_base', s.text)));
    const misses = a.stats().misses;
    // Same history again plus a new turn; one history text edited under its old id.
    const turn2 = [turn1[0]!, { id: 't1-assistant', text: long('answer one, corrected') }, { id: 't2-user', text: long('question two') }];
    const second = a.countSegments('cl100k_base', 'conv-1', turn2);
    expect(second).toEqual(turn2.map((s) => refCount('cl100k_base', s.text)));
    // The unchanged text needed no encoding; the edited and the new one did.
    expect(a.stats().misses - misses).toBe(2);
    // Another conversation with the same ids but other texts gets its own counts.
    const other = [{ id: 't1-user', text: long('a different rider') }];
    expect(a.countSegments('cl100k_base', 'conv-2', other)).toEqual([refCount('cl100k_base', other[0]!.text)]);
  });

  it('encode returns the reference ids, the same array when asked again', async () => {
    const a = await Accountant.create();
    await a.encoder('o200k_base');
    const t = long('clipped passage');
    const ids = a.encode('o200k_base', t);
    expect(ids).toEqual(Array.from(ref('o200k_base').encode_ordinary(t)));
    expect(a.encode('o200k_base', t)).toBe(ids);
  });
});
