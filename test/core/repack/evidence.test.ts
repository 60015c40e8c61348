import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { squadTokens } from '../../../extension/core/analysis/normalize';
import { countTokens, overlapF1 } from '../../../extension/core/analysis/f1';
import { replySupport } from '../../../extension/core/repack/evidence';

/**
 * Reply support counts each sent passage's SQuAD tokens separately (memoised per passage) instead of
 * normalising the passages joined with spaces. That is only right if SQuAD normalisation never acts
 * across a space; these checks compare with the joined definition on adversarial text.
 */
const joinedDefinition = (reply: string, texts: string[]): number | null => {
  const rt = squadTokens(reply);
  if (rt.length === 0) return null;
  const pt = squadTokens(texts.join(' '));
  if (pt.length === 0) return 0;
  return overlapF1(countTokens(rt), rt.length, countTokens(pt), pt.length).precision;
};

// Articles, ASCII punctuation at the edges, case that changes with context (final sigma), characters
// whose lower case is longer (İ), other whitespace, underscores and digits next to articles.
const pieces = ['the', 'The', 'A', 'an', ' ', '\t', '\n', '\u00a0', '.', ',', "'", '-', '_', 'ΑΣ', 'Σ', 'σ', 'İ', 'ß', '£2.10', 'fare', 'zone', 'x', '1', 'ﬁ', 'é', '\u0301', '"'];
const text = fc.array(fc.constantFrom(...pieces), { maxLength: 12 }).map((p) => p.join(''));

describe('reply support from per-passage SQuAD counts', () => {
  it('squadTokens of texts joined with spaces = their tokens one after another', () => {
    fc.assert(
      fc.property(fc.array(text, { maxLength: 5 }), (texts) => {
        expect(squadTokens(texts.join(' '))).toEqual(texts.flatMap((t) => squadTokens(t)));
      }),
      { numRuns: 2000 },
    );
  });

  it('equals the joined-text definition', () => {
    fc.assert(
      fc.property(text, fc.array(text, { maxLength: 5 }), (reply, texts) => {
        expect(replySupport(reply, texts)).toBe(joinedDefinition(reply, texts));
      }),
      { numRuns: 1000 },
    );
  });

  it('a worked case', () => {
    // reply → "the fare is £210" → articles out → [fare, is, £210] (3 tokens)
    // passages joined → "zone a fare £210 night buses" → [zone, fare, £210, night, buses]
    // common = fare + £210 = 2 → precision 2/3
    expect(replySupport('The fare is £2.10.', ['Zone A fare: £2.10', 'Night buses'])).toBeCloseTo(2 / 3, 12);
    expect(replySupport('', ['anything'])).toBeNull();
    expect(replySupport('A fare.', [])).toBe(0);
  });
});
