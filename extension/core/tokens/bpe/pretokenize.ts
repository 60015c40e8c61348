/**
 * Pre-tokenisation: gpt-tokenizer's own split regexes, with one correction.
 *
 * JavaScript's `\s` is not the reference's `\s`. tiktoken runs its patterns on Rust's `regex`/`fancy-regex`,
 * where `\s` is the Unicode White_Space property; ECMAScript's `\s` (WhiteSpace + LineTerminator) adds
 * U+FEFF (the byte-order mark) and omits U+0085 (NEXT LINE). Measured: "\uFEFFhello" is [3305, 15339] in
 * cl100k_base with tiktoken but [171, 3299, 15339] with gpt-tokenizer 4.0.0 (kept as a test case).
 * So every `\s` / `\S` in gpt-tokenizer's pattern is rewritten to the explicit White_Space set.
 *
 * Second, the reference writes its contractions case-insensitively (`'(?i:[sdmt]|ll|ve|re)`), and Rust's
 * case folding maps U+017F LATIN SMALL LETTER LONG S to "s"; gpt-tokenizer spells them `[sS]`. So `[sS]`
 * becomes `[sSſ]`. (No input was found where this changes ids — tokens never span "ſ" and its neighbours
 * in either vocabulary — but the pieces now match the reference's by construction.)
 */
import { CL100K_TOKEN_SPLIT_REGEX, O200K_TOKEN_SPLIT_REGEX } from 'gpt-tokenizer/encodingParams/constants';

/** Unicode White_Space (PropList.txt), as used by Rust's `\s`. */
const WHITE_SPACE = String.raw`\t-\r \x85\xa0\u1680\u2000-\u200a\u2028\u2029\u202f\u205f\u3000`;

/** Characters where JS `\s` and Unicode White_Space disagree. */
export const WHITESPACE_DIVERGENT = /[\ufeff\x85]/;

/** Rewrites `\s`/`\S` (inside and outside character classes) of a regex source to White_Space. */
export function withUnicodeWhiteSpace(source: string): string {
  let out = '';
  let inClass = false;
  for (let i = 0; i < source.length; i++) {
    const c = source[i]!;
    if (c === '\\') {
      const e = source[i + 1] ?? '';
      i++;
      if (e === 's') out += inClass ? WHITE_SPACE : `[${WHITE_SPACE}]`;
      else if (e === 'S') {
        if (inClass) throw new Error('\\S inside a character class is not supported');
        out += `[^${WHITE_SPACE}]`;
      } else out += c + e;
      continue;
    }
    if (c === '[' && !inClass) inClass = true;
    else if (c === ']' && inClass) inClass = false;
    out += c;
  }
  return out;
}

/** Adds the long s to the contraction letter "s", as Unicode simple case folding does. */
export function withFoldedContractions(source: string): string {
  if (!source.includes('[sS]')) throw new Error('gpt-tokenizer split pattern changed: contraction [sS] not found');
  return source.split('[sS]').join('[sS\u017f]');
}

const reference = (source: string): RegExp => new RegExp(withFoldedContractions(withUnicodeWhiteSpace(source)), 'gu');

export const SPLIT_PATTERNS = {
  cl100k_base: reference(CL100K_TOKEN_SPLIT_REGEX.source),
  o200k_base: reference(O200K_TOKEN_SPLIT_REGEX.source),
} as const;
