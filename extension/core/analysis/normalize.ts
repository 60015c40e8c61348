/**
 * Text normalisation.
 *
 * `normalizeAnswer` is a faithful port of `normalize_answer` from the official SQuAD v1.1
 * evaluation script (Rajpurkar et al., 2016): lower-case, delete every character of Python's
 * `string.punctuation` (ASCII only), replace the whole words a/an/the with a space, then
 * collapse whitespace. It is used only for the published F1 figures.
 *
 * `words` is our own tokenizer for sentence support, BM25 and shingles: it also handles
 * Unicode punctuation (curly quotes, dashes) that the SQuAD script leaves in place.
 */
import { eng } from 'stopword';

/** Python's `string.punctuation`: !"#$%&'()*+,-./:;<=>?@[\]^_`{|}~ */
const ASCII_PUNCTUATION = /[!"#$%&'()*+,\-./:;<=>?@[\\\]^_`{|}~]/g;

/**
 * `re.sub(r'\b(a|an|the)\b', ' ', text)` with Python 3's Unicode `\b`: a word character is a
 * letter, a number or `_` (JavaScript's `\b` is ASCII-only, so we spell the boundary out).
 */
const ARTICLES = /(?<![\p{L}\p{N}_])(?:a|an|the)(?![\p{L}\p{N}_])/gu;

/** SQuAD v1.1 `normalize_answer`, step for step: lower → remove_punc → remove_articles → white_space_fix. */
export function normalizeAnswer(s: string): string {
  const lowered = s.toLowerCase();
  const noPunct = lowered.replace(ASCII_PUNCTUATION, '');
  const noArticles = noPunct.replace(ARTICLES, ' ');
  return splitWhitespace(noArticles).join(' ');
}

/** The SQuAD token list: `normalize_answer(s).split()`. */
export function squadTokens(s: string): string[] {
  return splitWhitespace(normalizeAnswer(s));
}

/** Python's `str.split()` with no argument: split on runs of whitespace, drop empty ends. */
function splitWhitespace(s: string): string[] {
  const out: string[] = [];
  for (const part of s.split(/\s+/u)) if (part !== '') out.push(part);
  return out;
}

/** Apostrophes are deleted so that "don't" / "don’t" both become "dont" (as SQuAD does for '). */
const APOSTROPHES = /['\u2019\u02bc]/gu;
/** Every other Unicode punctuation or symbol character separates words. */
const SEPARATORS = /[\p{P}\p{S}\s]+/u;

/** Lower-cased word tokens, Unicode punctuation and symbols removed. Articles are kept. */
export function words(text: string): string[] {
  const out: string[] = [];
  for (const part of text.toLowerCase().replace(APOSTROPHES, '').split(SEPARATORS)) {
    if (part !== '') out.push(part);
  }
  return out;
}

/**
 * English stopwords: the `eng` list of the npm package `stopword` 3.1.5 (108 words; the file
 * carries Chris Umbel's 2011 copyright, i.e. the list of the `natural` NLP library). It has no
 * negations ("not", "no"), which matters for grounding. Apostrophes are removed to match `words`.
 */
export const STOPWORDS: ReadonlySet<string> = new Set(eng.map((w) => w.toLowerCase().replace(APOSTROPHES, '')));

/** Distinct content words (stopwords removed), in first-occurrence order. */
export function contentWords(text: string): string[] {
  const seen = new Set<string>();
  for (const w of words(text)) if (!STOPWORDS.has(w)) seen.add(w);
  return [...seen];
}
