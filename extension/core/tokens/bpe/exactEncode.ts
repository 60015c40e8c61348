/**
 * The exact pipeline for texts that gpt-tokenizer cannot take as a whole: pre-tokenise with the corrected
 * split pattern, then per piece either gpt-tokenizer (ordinary pieces) or the heap merge (long pieces and
 * pieces whose characters gpt-tokenizer treats differently from the reference).
 */
import { mergeCount, mergeEncode } from './heapMerge';
import { textToBinary, type RankTable } from './rankTable';

/**
 * Pieces longer than this many UTF-16 units go to the heap merge. Measured crossover (scripts/bench-hostile.ts,
 * `--threshold` mode; see docs/hostile-text.md): below ~64 units gpt-tokenizer's quadratic merge plus its
 * merge cache is as fast or faster; above ~128 the heap merge wins on every hostile class and the gap grows
 * quadratically.
 */
export const LONG_PIECE_THRESHOLD = 128;

/**
 * Characters whose pieces must not be handed to gpt-tokenizer:
 * - U+FEFF, U+0085: JS `\s` and the reference's White_Space disagree (see pretokenize.ts);
 * - U+017F (long s): the reference matches contractions case-insensitively, and Unicode case folding
 *   maps "ſ" to "s", so "'ſ" is a contraction piece there; the corrected pattern splits it the same way,
 *   but gpt-tokenizer's own pattern would re-split such a piece differently;
 * - lone surrogates (\p{Cs} under /u): the reference sees U+FFFD (the JS→Rust string conversion replaces
 *   them) and looks the whole piece up as bytes; gpt-tokenizer looks the JS string up and misses.
 */
export const DIVERGENT = /[\ufeff\x85\u017f\p{Cs}]/u;

/** A piece longer than LONG_PIECE_THRESHOLD UTF-16 units (> THRESHOLD/2 code points) contains a run of at
 * least THRESHOLD/2 − 4 code points of one of these two classes (letter pieces: letters/marks plus a one-char
 * prefix and a ≤3-char contraction; every other long piece has no letters or digits at all). */
const RUN = Math.floor(LONG_PIECE_THRESHOLD / 2) - 4;
const MAY_HAVE_LONG_PIECE = new RegExp(`[\\p{L}\\p{M}]{${RUN},}|[^\\p{L}\\p{N}]{${RUN},}`, 'u');

/** True when a text needs the exact pipeline (it may hold a long piece or a divergent character). */
export function needsExactPath(text: string): boolean {
  if (DIVERGENT.test(text)) return true;
  return text.length > LONG_PIECE_THRESHOLD && MAY_HAVE_LONG_PIECE.test(text);
}

export interface PieceCoder {
  split: RegExp;
  table: () => RankTable;
  encodeOrdinary(piece: string): number[];
  countOrdinary(piece: string): number;
}

function routeToMerge(piece: string): boolean {
  return piece.length > LONG_PIECE_THRESHOLD || DIVERGENT.test(piece);
}

export function exactEncode(coder: PieceCoder, text: string): number[] {
  const out: number[] = [];
  for (const [piece] of text.matchAll(coder.split)) {
    if (routeToMerge(piece)) {
      mergeEncode(coder.table(), textToBinary(piece), out);
    } else {
      for (const id of coder.encodeOrdinary(piece)) out.push(id);
    }
  }
  return out;
}

export function exactCount(coder: PieceCoder, text: string): number {
  let n = 0;
  for (const [piece] of text.matchAll(coder.split)) {
    n += routeToMerge(piece) ? mergeCount(coder.table(), textToBinary(piece)) : coder.countOrdinary(piece);
  }
  return n;
}
