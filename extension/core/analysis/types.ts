/**
 * Shapes of the grounding and passage diagnostics. Everything here is plain JSON
 * (no Maps, no undefined in arrays) so it can be written into `spillway audit --format json`
 * (schema `spillway.audit/1`) as a per-record `analysis` and a top-level `analysisSummary`.
 * Field names are stable; see docs/grounding.md.
 */
import type { Fate, SegmentKind } from '../log/types';

export interface AnalysisSettings {
  /** Share of a sentence's content words that one part must contain to support it. */
  supportShare: number;
  /** …and at least this many of them. */
  supportMinWords: number;
  /** Sentences with fewer content words are labelled `skipped` (greetings, "Hope this helps!"). */
  sentenceMinWords: number;
  /** Segment kinds whose text can support a reply sentence. */
  supportKinds: SegmentKind[];
  /** Shingle size w, in words (Broder 1997). */
  shingleWords: number;
  /** A pair is a near-duplicate when resemblance ≥ this … */
  duplicateResemblance: number;
  /** … or when either passage's containment in the other is ≥ this. */
  duplicateContainment: number;
  /** Use a MinHash (bottom-k) estimate when the turn's passages hold more distinct shingles than this in total. */
  minhashAboveShingles: number;
  /** Sketch size k of the bottom-k MinHash. */
  minhashSize: number;
  /** "By far": the best BM25 score is at least this many times the runner-up's. */
  lexicalByFar: number;
  /** A passage block with at least this many passages sent is "long" (position risk). */
  longBlock: number;
  /** Passages whose `date` is older than this many days (before `now`) are stale. */
  staleAfterDays: number;
  /** ISO time to measure age from; when absent the record's `time` is used. Never the wall clock. */
  now?: string;
}

export type SentenceLabel = 'supported' | 'unsupported' | 'lost' | 'skipped';

/** How well one part of a segment covers one sentence. */
export interface PartMatch {
  /** Segment id. */
  id: string;
  kind: SegmentKind;
  /** `kept`: the part that was sent; `spilled`: the clipped remainder or a dropped segment. */
  part: 'kept' | 'spilled';
  /** Overlapping content words ÷ the sentence's content words. */
  share: number;
  /** The overlapping content words, in sentence order. */
  overlap: string[];
}

export interface SentenceSupport {
  index: number;
  /** UTF-16 offsets into the reply of the trimmed sentence. */
  start: number;
  end: number;
  text: string;
  label: SentenceLabel;
  /** Number of distinct content words. */
  contentWords: number;
  /** Best-covering kept part (null when nothing was sent that shares a word). */
  kept: PartMatch | null;
  /** Best-covering spilled part. */
  spilled: PartMatch | null;
}

export interface PassageAnalysis {
  id: string;
  rank: number | null;
  fate: Fate;
  keptTokens: number;
  /** 1-based position among the passages as sent (prompt order); null when dropped. */
  position: number | null;
  /** Knowledge F1 of the reply against the passage's full text. */
  f1: number;
  /** Knowledge F1 of the reply against the part that was sent (0 when dropped). */
  keptF1: number;
  /** BM25+ against the query (null when the turn has no query text). */
  bm25Query: number | null;
  /** 1-based rank by `bm25Query` (ties share the better rank). */
  bm25QueryRank: number | null;
  /** BM25+ against the reply (null when there is no reply). */
  bm25Reply: number | null;
  /** Reply sentences this passage's kept part supports (as best match). */
  supports: number;
  /** Reply sentences only this passage's spilled part supports (as best match). */
  lostSupports: number;
  date: string | null;
  ageDays: number | null;
  stale: boolean;
}

export interface EvidenceCheck {
  /** Reviewer-marked ids, as in the record. */
  ids: string[];
  /** Ids that name no passage of the record. */
  missing: string[];
  /** Evidence passages that were clipped or dropped. */
  cut: { id: string; fate: Fate }[];
  /** Knowledge F1 of the reply against the evidence texts joined with a space (null without a reply). */
  f1: number | null;
}

export interface LexicalCheck {
  /** Kendall's tau-b between retriever rank and BM25+ (query) score; null with < 2 ranked passages or no query. */
  tau: number | null;
  /** Ranked passages that entered tau. */
  n: number;
  /** Passage with the highest BM25+ against the query (null when all score 0 or there is a tie at the top). */
  best: string | null;
  bestRank: number | null;
  /** Best score ÷ runner-up score (Infinity is written as null). */
  ratio: number | null;
  /** Best lexical match is in the lower half of the retriever ranks and "by far" ahead. */
  flagged: boolean;
}

export interface DuplicatePair {
  /** Better-ranked (or earlier) passage. */
  a: string;
  /** Lower-ranked (or later) passage: the one whose sent tokens count as waste. */
  b: string;
  resemblance: number;
  /** c(a, b): share of a's shingles found in b. */
  containmentAB: number;
  containmentBA: number;
  /** keptTokens of `b` when `a` was also sent, else 0. */
  wastedTokens: number;
}

export interface DuplicateCheck {
  method: 'exact' | 'minhash';
  w: number;
  /** Shingle positions over the turn's passages (Σ max(1, words − w + 1) over non-empty passages); decides exact vs MinHash. */
  shingles: number;
  pairs: DuplicatePair[];
  /** Sum of keptTokens of each passage that is the wasted member of at least one pair (counted once). */
  wastedTokens: number;
}

export interface PositionCheck {
  /** Passage judged to carry the reply (see docs/grounding.md), null when none does. */
  best: string | null;
  /** 1-based position of `best` among sent passages, and how many were sent. */
  position: number | null;
  of: number;
  third: 'first' | 'middle' | 'last' | null;
  /** Segment tokens sent before `best` (framing and joins excluded). */
  tokensBefore: number | null;
  long: boolean;
  /** `best` sits in the middle third of a long block. */
  flagged: boolean;
}

export interface StalenessCheck {
  now: string | null;
  staleAfterDays: number;
  stale: string[];
  /** Sent tokens of stale passages. */
  staleTokens: number;
}

export type TurnFlag =
  | 'unsupported-sentences'
  | 'evidence-lost'
  | 'evidence-cut'
  | 'lexical-mismatch'
  | 'near-duplicates'
  | 'middle-position'
  | 'stale-passages';

export interface TurnAnalysis {
  conversation: string;
  turn: number;
  hasReply: boolean;
  sentences: SentenceSupport[];
  counts: Record<SentenceLabel, number>;
  /** Evidence F1 when the record marks evidence, else the best per-passage F1; null without reply or passages. */
  knowledgeF1: number | null;
  knowledgeF1Basis: 'evidence' | 'best-passage' | null;
  passages: PassageAnalysis[];
  evidence: EvidenceCheck | null;
  lexical: LexicalCheck | null;
  duplicates: DuplicateCheck;
  position: PositionCheck;
  staleness: StalenessCheck;
  flags: TurnFlag[];
  notes: string[];
}

export interface AnalysisSummary {
  turns: number;
  turnsWithReply: number;
  sentences: Record<SentenceLabel, number>;
  /** Turns (with a reply) having ≥ 1 unsupported sentence, and that ÷ turnsWithReply (null when 0). */
  turnsWithUnsupported: number;
  shareWithUnsupported: number | null;
  /** Turns having ≥ 1 sentence supported only by spilled text. */
  turnsWithLostEvidence: number;
  shareWithLostEvidence: number | null;
  /** Turns where a reviewer-marked evidence passage was clipped or dropped. */
  turnsWithEvidenceCut: number;
  duplicatePairs: number;
  duplicateWasteTokens: number;
  stalePassages: number;
  staleTokens: number;
  /** Mean of per-turn knowledgeF1 over turns where it is not null. */
  meanKnowledgeF1: number | null;
  knowledgeF1Turns: number;
  /** Mean evidence F1 over turns with reviewer-marked evidence and a reply. */
  meanEvidenceF1: number | null;
  evidenceTurns: number;
  meanKendallTau: number | null;
  lexicalMismatchTurns: number;
  middlePositionTurns: number;
}
