/**
 * cleanPrefix and tokenBoundaries against an oracle built from the reference encoder: tiktoken's own ids
 * and its `decode` (bytes), checked with a fatal UTF-8 decoder and String.prototype.startsWith.
 */
import type { Tiktoken } from 'tiktoken';
import { describe, expect, it } from 'vitest';
import { cleanPrefix, tokenBoundaries } from '../../../extension/core/tokens/cut';
import { encoderPair, NAMES } from '../../support/encoders';

const { encoders, refs } = encoderPair();

const TEXTS = [
  'plain ascii text, nothing special.',
  '👩🏽‍💻 codes; 👍🏽 ok 🇳🇿',
  '稀有汉字：龘靐齉麤 and 𠀀𠀁 (astral CJK)',
  'e\u0301\u0301 combining, ß, İstanbul',
  '的'.repeat(200) + '😀'.repeat(50),
  'lone \uD800 surrogate and \uDC00 again',
  '',
];

const fatal = new TextDecoder('utf-8', { fatal: true });

/** Oracle for cleanPrefix: the largest k' ≤ k whose reference-decoded bytes are valid UTF-8 and a prefix
 * of the (well-formed) text; chars = that prefix's UTF-16 length. */
function oracleCleanPrefix(tk: Tiktoken, ids: Uint32Array, text: string, k: number): { tokens: number; chars: number } {
  const wellFormed = text.replace(/\p{Cs}/gu, '\uFFFD');
  for (let j = Math.min(k, ids.length); j >= 0; j--) {
    try {
      const s = fatal.decode(tk.decode(ids.slice(0, j)));
      if (wellFormed.startsWith(s)) return { tokens: j, chars: s.length };
    } catch {
      // ends inside a character: back off
    }
  }
  throw new Error('unreachable: k = 0 is always clean');
}

describe('cleanPrefix', () => {
  for (const name of NAMES) {
    it(`${name}: every k on texts with multi-byte characters split across tokens`, () => {
      const e = encoders.get(name)!;
      const tk = refs.get(name)!;
      let sawBackOff = false;
      for (const text of TEXTS) {
        const ids = tk.encode_ordinary(text);
        const ours = Array.from(ids);
        for (let k = 0; k <= ids.length + 1; k++) {
          const got = cleanPrefix(e, ours, k);
          expect(got, `${JSON.stringify(text.slice(0, 20))} k=${k}`).toEqual(oracleCleanPrefix(tk, ids, text, k));
          if (got.tokens < Math.min(k, ids.length)) sawBackOff = true;
        }
      }
      expect(sawBackOff).toBe(true); // the texts do contain cuts inside characters
    });
  }

  it('hand-worked: "a😀" in cl100k_base', () => {
    // "a😀" is bytes 61 | F0 9F 98 80. Whatever the split of the emoji's four bytes over tokens, a cut
    // after the first token that ends inside the emoji must back off to after "a": 1 UTF-16 unit.
    const e = encoders.get('cl100k_base')!;
    const ids = e.encode('a😀');
    const full = cleanPrefix(e, ids, ids.length);
    expect(full).toEqual({ tokens: ids.length, chars: 3 }); // "a" (1 unit) + surrogate pair (2 units)
    expect(cleanPrefix(e, ids, ids.length - 1).chars).toBeLessThanOrEqual(1);
  });
});

/** Oracle for tokenBoundaries: the UTF-16 offset of the first character boundary at or after the byte
 * length of the reference-decoded first t+1 tokens. */
function oracleBoundaries(tk: Tiktoken, text: string): number[] {
  const ids = tk.encode_ordinary(text);
  const charEnds: Array<[bytes: number, units: number]> = [[0, 0]];
  let bytes = 0;
  let units = 0;
  for (const ch of text.replace(/\p{Cs}/gu, '\uFFFD')) {
    bytes += Buffer.byteLength(ch, 'utf8');
    units += ch.length;
    charEnds.push([bytes, units]);
  }
  const out: number[] = [];
  for (let t = 0; t < ids.length; t++) {
    const b = tk.decode(ids.slice(0, t + 1)).length;
    out.push(charEnds.find(([cb]) => cb >= b)![1]);
  }
  return out;
}

describe('tokenBoundaries', () => {
  for (const name of NAMES) {
    it(`${name}: matches the reference-derived boundaries`, () => {
      for (const text of TEXTS) {
        expect(tokenBoundaries(encoders.get(name)!, text), JSON.stringify(text.slice(0, 20))).toEqual(
          oracleBoundaries(refs.get(name)!, text),
        );
      }
    });
  }
  it('ends at text.length and never decreases', () => {
    const text = TEXTS[1]! + TEXTS[2]!;
    const b = tokenBoundaries(encoders.get('o200k_base')!, text);
    expect(b.at(-1)).toBe(text.length);
    for (let i = 1; i < b.length; i++) expect(b[i]!).toBeGreaterThanOrEqual(b[i - 1]!);
  });
});
