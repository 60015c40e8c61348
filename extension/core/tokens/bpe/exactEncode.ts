/**
 * The exact pipeline for texts that gpt-tokenizer cannot take as a whole: pre-tokenise with the corrected
 * split pattern, then per piece either gpt-tokenizer (ordinary pieces) or the heap merge (long pieces and
 * pieces whose characters gpt-tokenizer treats differently from the reference).
 */
import { mergeCount, mergeEncode } from './heapMerge';
import { textToBinary, type RankTable } from './rankTable';

/**
 * Pieces longer than this many UTF-16 units go to the heap merge. Measured (scripts/bench-hostile.ts
 * `--threshold`, docs/hostile-text.md): on letter pieces the heap merge is faster at every length; on CJK
 * pieces both are within noise up to ~192 and the heap merge wins from 256 on, the gap growing
 * quadratically. 128 keeps short pieces on gpt-tokenizer (and its piece cache) where it costs no more;
 * a piece at the threshold costs ≲ 0.6 ms either way.
 */
export const LONG_PIECE_THRESHOLD = 128;

/**
 * Characters whose pieces must not be handed to gpt-tokenizer:
 * - U+FEFF, U+0085: JS `\s` and the reference's White_Space disagree (see pretokenize.ts);
 * - U+017F (long s): the reference matches contractions case-insensitively and folds "ſ" to "s", so "'ſ"
 *   is a contraction piece there and in the corrected pattern, but gpt-tokenizer's own pattern would
 *   re-split such a piece;
 * - lone surrogates (\p{Cs} under /u): the reference sees U+FFFD (the JS→Rust string conversion replaces
 *   them) and looks the whole piece up as bytes; gpt-tokenizer looks the JS string up and misses.
 */
export const DIVERGENT = /[\ufeff\x85\u017f\p{Cs}]/u;

/** A piece longer than LONG_PIECE_THRESHOLD UTF-16 units (> THRESHOLD/2 code points) contains a run of at
 * least THRESHOLD/2 − 4 code points of one of these two classes (letter pieces: letters/marks plus a one-char
 * prefix and a ≤3-char contraction; every other long piece has no letters or digits at all). */
const RUN = Math.floor(LONG_PIECE_THRESHOLD / 2) - 4;
const MAY_HAVE_LONG_PIECE = new RegExp(`[\\p{L}\\p{M}]{${RUN},}|[^\\p{L}\\p{N}]{${RUN},}`, 'u');

const LETTER = 1;
const OTHER = 2;
const EITHER = LETTER | OTHER;

/**
 * Cheap class of one UTF-16 unit for the screening scan: exact for ASCII and for a few large blocks that
 * are all letters (Latin-1 letters, basic Cyrillic, kana, CJK ideographs, Hangul syllables) or all
 * punctuation (common CJK and fullwidth punctuation); everything else counts as both, so the scan never
 * misses a run — it can only over-report, and then the exact regex decides.
 */
function classOf(c: number): number {
  if (c < 0x80) {
    if ((c >= 0x61 && c <= 0x7a) || (c >= 0x41 && c <= 0x5a)) return LETTER;
    if (c >= 0x30 && c <= 0x39) return 0; // digit: breaks both runs (digit pieces are ≤ 3 long)
    return OTHER;
  }
  if (c >= 0x4e00 && c <= 0x9fff) return LETTER;
  if (c >= 0xac00 && c <= 0xd7a3) return LETTER;
  if (c >= 0x3041 && c <= 0x3096) return LETTER;
  if (c >= 0x30a1 && c <= 0x30fa) return LETTER;
  if (c >= 0x0410 && c <= 0x044f) return LETTER;
  if (c >= 0xc0 && c <= 0xff && c !== 0xd7 && c !== 0xf7) return LETTER;
  if (c === 0x3001 || c === 0x3002 || c === 0xff0c || c === 0xff01 || c === 0xff1f || c === 0xff1a || c === 0xff1b) {
    return OTHER;
  }
  return EITHER;
}

/**
 * True when a text needs the exact pipeline: it holds a character gpt-tokenizer treats differently from the
 * reference (DIVERGENT), or it may hold a piece longer than LONG_PIECE_THRESHOLD. One pass over the
 * UTF-16 units; only texts with a suspicious run pay for the Unicode-property regex. (A regex-only screen
 * cost ~70% of gpt-tokenizer's own count time on the sample logs; this scan costs a few percent.)
 */
export function needsExactPath(text: string): boolean {
  let letterRun = 0;
  let otherRun = 0;
  const n = text.length;
  for (let i = 0; i < n; i++) {
    const c = text.charCodeAt(i);
    if (c === 0xfeff || c === 0x85 || c === 0x17f) return true;
    if (c >= 0xd800 && c <= 0xdfff) {
      // lone surrogate?
      if (c <= 0xdbff) {
        const d = i + 1 < n ? text.charCodeAt(i + 1) : 0;
        if (d < 0xdc00 || d > 0xdfff) return true;
        i++; // astral character: two units of one unknown-class character
      } else {
        return true;
      }
      letterRun += 2;
      otherRun += 2;
    } else {
      const k = classOf(c);
      letterRun = k & LETTER ? letterRun + 1 : 0;
      otherRun = k & OTHER ? otherRun + 1 : 0;
    }
    if (letterRun >= RUN || otherRun >= RUN) return DIVERGENT.test(text) || MAY_HAVE_LONG_PIECE.test(text);
  }
  return false;
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
