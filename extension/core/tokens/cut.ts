/**
 * Cut points and token boundaries in UTF-16 offsets.
 *
 * A token is a run of UTF-8 bytes, and a byte-level BPE token may end inside a character (e.g. an emoji or
 * a rare CJK character spread over two or three tokens). The original text is a JS string, so every
 * offset given out here is a UTF-16 offset at a character boundary.
 *
 * Lone surrogates in the source text are encoded as U+FFFD (3 bytes, 1 UTF-16 unit — the same unit count
 * as the surrogate they replace), so offsets computed here still index the original string.
 */
import { tokenBytes, type Encoder } from './encoder';

function isContinuation(b: number): boolean {
  return (b & 0xc0) === 0x80;
}

/** UTF-16 units of a character that starts with lead byte b. */
function unitsOfLead(b: number): number {
  return b >= 0xf0 ? 2 : 1;
}

/**
 * The largest k' ≤ k such that the first k' tokens of `ids` (the encoding of some text) decode to a clean
 * prefix of that text — one that does not end inside a character — and that prefix's UTF-16 length.
 * k is clamped to [0, ids.length].
 */
export function cleanPrefix(encoder: Encoder, ids: readonly number[], k: number): { tokens: number; chars: number } {
  let end = Math.max(0, Math.min(Math.floor(k), ids.length));
  // The prefix ends inside a character exactly when the next token starts with a continuation byte.
  while (end > 0 && end < ids.length && isContinuation(tokenBytes(encoder, ids[end]!)[0]!)) end--;
  let chars = 0;
  for (let i = 0; i < end; i++) {
    for (const b of tokenBytes(encoder, ids[i]!)) if (!isContinuation(b)) chars += unitsOfLead(b);
  }
  return { tokens: end, chars };
}

/**
 * For each token of `text`, the UTF-16 offset where it ends. A token that ends inside a character is
 * given the end of that character, so offsets never split a character (several tokens may then share
 * one offset). The last offset is text.length.
 */
export function tokenBoundaries(encoder: Encoder, text: string): number[] {
  const ids = encoder.encode(text);
  const out = new Array<number>(ids.length);
  let units = 0; // UTF-16 units of complete characters so far
  let pending = 0; // continuation bytes still expected in the current character
  let charUnits = 0; // units of the current character
  for (let t = 0; t < ids.length; t++) {
    for (const b of tokenBytes(encoder, ids[t]!)) {
      if (isContinuation(b)) {
        if (pending > 0 && --pending === 0) units += charUnits;
      } else {
        pending = b < 0x80 ? 0 : b < 0xe0 ? 1 : b < 0xf0 ? 2 : 3;
        charUnits = unitsOfLead(b);
        if (pending === 0) units += charUnits;
      }
    }
    out[t] = pending > 0 ? units + charUnits : units;
  }
  return out;
}
