/**
 * Property: for random text biased towards long runs (the pieces that take the heap merge) and mixed
 * scripts, Spillway's ids equal the reference encoder's (`tiktoken` WASM, `encode_ordinary`).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { encoderPair, NAMES } from '../../support/encoders';

const { encoders, refs } = encoderPair();

/** Latin, CJK, Hangul, digits, whitespace of several kinds, punctuation, emoji with modifiers, combining
 * marks, and the characters where JS and the reference disagree on `\s` or on case folding. */
const UNITS = [
  'a', 'Z', 'é', 'ß', 'İ', 'ſ', "'", 's', 'T', '的', '語', '한', 'ア', 'ж', 'ع', 'क्', '1', '9', '٣',
  ' ', '  ', '\n', '\r\n', '\r', '\t', '\u00a0', '\u3000', '\u2028', '\u0085', '\uFEFF', '\u200d', '\u200b',
  '-', '/', '.', '!', '{"k":', '<|endoftext|>', '😀', '👍🏽', '👩🏽‍💻', '\u0301', '\u0308', '\uFFFD',
];

const unit = fc.constantFrom(...UNITS);
/** A run: one unit repeated, often far past the long-piece threshold. */
const run = fc
  .tuple(unit, fc.oneof(fc.integer({ min: 1, max: 8 }), fc.integer({ min: 60, max: 400 })))
  .map(([u, k]) => u.repeat(k));
/** A mixed run: units drawn independently (mixed scripts inside one piece). */
const mixed = fc.array(unit, { minLength: 1, maxLength: 200 }).map((a) => a.join(''));
const text = fc
  .array(fc.oneof(run, mixed, fc.string({ unit: 'grapheme', maxLength: 30 }), fc.string({ unit: 'binary', maxLength: 12 })), {
    maxLength: 10,
  })
  .map((parts) => parts.join(''));

describe('property: ids identical to tiktoken on run-heavy mixed-script text', () => {
  for (const name of NAMES) {
    it(name, () => {
      fc.assert(
        fc.property(text, (t) => {
          const expected = Array.from(refs.get(name)!.encode_ordinary(t));
          expect(encoders.get(name)!.encode(t).join(' ')).toBe(expected.join(' '));
          expect(encoders.get(name)!.count(t)).toBe(expected.length);
        }),
        { numRuns: 200 },
      );
    }, 120_000);
  }
});
