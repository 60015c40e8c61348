/**
 * Sentence support: does some part of a segment that was sent contain most of a reply
 * sentence's content words?
 *
 * The score is precision-oriented — the share of the sentence's distinct content words found
 * in the part — in the spirit of K-Precision (Adlakha et al., TACL 2024: the share of response
 * tokens that appear in the knowledge), computed per sentence so one unsupported claim is not
 * averaged away by a well-grounded rest of the reply. Thresholds are ours; see docs/grounding.md.
 */
import type { SegmentKind } from '../log/types';
import { contentWords } from './normalize';
import { plainTexts, type TextSource } from './textfacts';
import type { PartMatch, SentenceLabel, SentenceSupport } from './types';

export interface SentenceSpan {
  start: number;
  end: number;
  text: string;
}

// ICU's sentence rules; one segmenter per locale is enough (construction is not free).
const segmenters = new Map<string | undefined, Intl.Segmenter>();

/** Sentences of `text` (Intl.Segmenter, granularity "sentence"), trimmed, blank ones left out. */
export function splitSentences(text: string, locale?: string): SentenceSpan[] {
  let segmenter = segmenters.get(locale);
  if (!segmenter) {
    segmenter = new Intl.Segmenter(locale, { granularity: 'sentence' });
    segmenters.set(locale, segmenter);
  }
  const out: SentenceSpan[] = [];
  for (const { segment, index } of segmenter.segment(text)) {
    const lead = segment.length - segment.trimStart().length;
    const trimmed = segment.trim();
    if (trimmed === '') continue;
    out.push({ start: index + lead, end: index + lead + trimmed.length, text: trimmed });
  }
  return out;
}

/** One candidate source of support: a segment's sent part, or its spilled side. */
export interface SupportPart {
  id: string;
  kind: SegmentKind;
  part: 'kept' | 'spilled';
  text: string;
}

export interface SupportThresholds {
  supportShare: number;
  supportMinWords: number;
  sentenceMinWords: number;
}

interface IndexedPart {
  part: SupportPart;
  /** The part's words (keys; the counts are not used here). */
  vocabulary: ReadonlyMap<string, number>;
}

function bestMatch(sentenceWords: readonly string[], parts: readonly IndexedPart[]): PartMatch | null {
  let best: PartMatch | null = null;
  for (const { part, vocabulary } of parts) {
    const overlap = sentenceWords.filter((w) => vocabulary.has(w));
    if (overlap.length === 0) continue;
    const share = overlap.length / sentenceWords.length;
    // Strictly greater: on a tie the earlier part (the caller passes them in rank order) wins.
    if (!best || share > best.share) best = { id: part.id, kind: part.kind, part: part.part, share, overlap };
  }
  return best;
}

/**
 * Label each reply sentence. `parts` should be in the order that breaks ties (best rank first).
 * Cost: one pass over every part's text to build its vocabulary, then |content words| lookups
 * per sentence and part.
 */
export function sentenceSupport(
  reply: string,
  parts: readonly SupportPart[],
  thresholds: SupportThresholds,
  locale?: string,
  texts: Pick<TextSource, 'terms'> = plainTexts,
): SentenceSupport[] {
  const kept: IndexedPart[] = [];
  const spilled: IndexedPart[] = [];
  for (const part of parts) {
    (part.part === 'kept' ? kept : spilled).push({ part, vocabulary: texts.terms(part.text) });
  }
  return splitSentences(reply, locale).map((span, index) => {
    const cw = contentWords(span.text);
    const keptMatch = cw.length > 0 ? bestMatch(cw, kept) : null;
    const spilledMatch = cw.length > 0 ? bestMatch(cw, spilled) : null;
    const needWords = Math.min(thresholds.supportMinWords, cw.length);
    const enough = (m: PartMatch | null): boolean => m !== null && m.share >= thresholds.supportShare && m.overlap.length >= needWords;
    let label: SentenceLabel;
    if (cw.length < thresholds.sentenceMinWords) label = 'skipped';
    else if (enough(keptMatch)) label = 'supported';
    else if (enough(spilledMatch)) label = 'lost';
    else label = 'unsupported';
    return { index, start: span.start, end: span.end, text: span.text, label, contentWords: cw.length, kept: keptMatch, spilled: spilledMatch };
  });
}
