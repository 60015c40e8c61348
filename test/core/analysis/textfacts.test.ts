import { beforeAll, describe, expect, it } from 'vitest';
import { loadShingleHasher } from '../../../extension/core/analysis/shingles';
import { joinedSquad, memoTexts, plainTexts, type TextSource } from '../../../extension/core/analysis/textfacts';

const TEXTS = [
  'The Night Bus, the night BUS: runs hourly.',
  'Don’t board at Quay St — use the ramp.',
  '',
  'one two',
  'A day pass costs 5 dollars. A day pass is valid on trams.',
];

/** Everything a source says about a text, as plain data. */
function facts(source: TextSource, text: string): unknown {
  return {
    words: [...source.words(text)],
    terms: [...source.terms(text)],
    squad: { counts: [...source.squad(text).counts], length: source.squad(text).length },
    shingles: [...source.shingles(text, 2)],
    sketch: (({ mins, size }) => ({ mins: [...mins], size }))(source.sketch(text, 2, 4)),
  };
}

describe('text facts', () => {
  beforeAll(loadShingleHasher);

  it('by hand: words, term counts, SQuAD counts, 2-word shingles', () => {
    const t = plainTexts;
    const text = 'The Night Bus, the night BUS: runs hourly.';
    // words(): lower-cased, punctuation gone, articles kept.
    expect(t.words(text)).toEqual(['the', 'night', 'bus', 'the', 'night', 'bus', 'runs', 'hourly']);
    expect([...t.terms(text)]).toEqual([
      ['the', 2],
      ['night', 2],
      ['bus', 2],
      ['runs', 1],
      ['hourly', 1],
    ]);
    // SQuAD normalisation also drops the articles: night bus night bus runs hourly (6 tokens).
    expect(t.squad(text).length).toBe(6);
    expect([...t.squad(text).counts]).toEqual([
      ['night', 2],
      ['bus', 2],
      ['runs', 1],
      ['hourly', 1],
    ]);
    // Shingles as a set: "the night", "night bus", "bus the", ("the night", "night bus" again), "bus runs", "runs hourly".
    expect([...t.shingles(text, 2)]).toEqual(['the night', 'night bus', 'bus the', 'bus runs', 'runs hourly']);
  });

  it('the memo gives what the plain source gives, cold and warm, for every text', () => {
    const memo = memoTexts(2);
    for (let round = 0; round < 3; round++) {
      for (const text of TEXTS) expect(facts(memo, text)).toEqual(facts(plainTexts, text));
    }
    // Five texts through a memo of 2 per generation: never more than 4 held.
    expect(memo.memo.size).toBeLessThanOrEqual(4);
  });

  it('a warm memo returns the same objects (no recomputation), a different w its own shingles', () => {
    const memo = memoTexts(8);
    const text = TEXTS[4]!;
    expect(memo.words(text)).toBe(memo.words(text));
    expect(memo.terms(text)).toBe(memo.terms(text));
    expect(memo.squad(text)).toBe(memo.squad(text));
    expect(memo.shingles(text, 3)).toBe(memo.shingles(text, 3));
    expect([...memo.shingles(text, 3)]).toEqual([...plainTexts.shingles(text, 3)]);
    expect([...memo.shingles(text, 1)]).toEqual(['a', 'day', 'pass', 'costs', '5', 'dollars', 'is', 'valid', 'on', 'trams']);
  });

  it('texts above maxChars are not held', () => {
    const memo = memoTexts(8, 10);
    const long = 'eleven char';
    expect(memo.words(long)).toEqual(['eleven', 'char']);
    expect(memo.words(long)).not.toBe(memo.words(long));
    expect(memo.memo.size).toBe(0);
    memo.words('ten chars.');
    expect(memo.memo.size).toBe(1);
  });

  it('a bad shingle size still throws through the memo', () => {
    expect(() => memoTexts(4).shingles('a b c', 0)).toThrow(/positive integer/);
  });

  it('joinedSquad: counts of texts joined with spaces, from each text’s counts', () => {
    // "The Night Bus, the night BUS: runs hourly." → [night, bus, night, bus, runs, hourly]
    // "one two" → [one, two]; joined: 8 tokens, night ×2, bus ×2.
    const j = joinedSquad([plainTexts.squad(TEXTS[0]!), plainTexts.squad('one two')]);
    expect(j.length).toBe(8);
    expect(j.counts.get('night')).toBe(2);
    expect(j.counts.get('bus')).toBe(2);
    expect(j.counts.get('two')).toBe(1);
    // The same as normalising the joined text, for every prefix of the sample texts.
    for (let n = 0; n <= TEXTS.length; n++) {
      const parts = TEXTS.slice(0, n);
      const whole = plainTexts.squad(parts.join(' '));
      const got = joinedSquad(parts.map((t) => plainTexts.squad(t)));
      expect(got.length).toBe(whole.length);
      expect(new Map(got.counts)).toEqual(new Map(whole.counts));
    }
  });
});
