import type { Fate, LogIssue, SegmentKind, Role } from '../log/types';
import type { AnalysisSummary, TurnAnalysis } from '../analysis/types';

export type KindTotals = Record<SegmentKind, number>;

/** Where a clipped segment ends: tokens kept, and the UTF-16 offset into `text` where the kept part ends. */
export interface CutPoint {
  token: number;
  char: number;
}

export interface SegmentLedger {
  id: string;
  kind: SegmentKind;
  role: Role;
  /** Chat message this segment belongs to, after resolving `message` indices (0-based, prompt order). */
  message: number;
  rank?: number;
  score?: number;
  /** Exact token count of the segment's own text. */
  tokens: number;
  /** Tokens of the part that was sent (0 when dropped, `tokens` when kept). */
  keptTokens: number;
  fate: Fate;
  cut?: CutPoint;
  /** When the record says what was sent and it differs from the declared plan: the plan's fate. */
  planFate?: Fate;
  /** Only for very large texts (guard rail against hostile input): UTF-8 size and the time the first count took. */
  large?: { bytes: number; countMs: number };
}

/**
 * `ok`: fits. `over-budget`: the sent prompt is larger than the budget.
 * `over-before-passages`: instructions + query (+ framing) alone exceed the budget, so no passage could fit.
 */
export type TurnState = 'ok' | 'over-budget' | 'over-before-passages';

export interface Ledger {
  line: number;
  conversation: string;
  turn: number;
  model: string;
  encoding: string;
  window: number;
  reserve: number;
  /** window − reserve */
  budget: number;
  framingProfile: string;
  /** Framing tokens of the sent prompt (per message, per name, role strings, priming). */
  framing: number;
  /** Tokens that come from joining segment texts inside one message: used − Σ keptTokens − framing. Can be negative. */
  joins: number;
  /** Exact token count of the sent prompt, rendered with its framing. */
  used: number;
  free: number;
  /** max(0, used − budget) */
  over: number;
  /** Σ (tokens − keptTokens): segment tokens that were not sent. */
  spill: number;
  /** Exact token count of the whole prompt had nothing been cut. */
  full: number;
  /** Kept tokens by segment kind. */
  byKind: KindTotals;
  segments: SegmentLedger[];
  state: TurnState;
  /** Whether fates come from the declared packing plan or from the record's `sent` list. */
  fatesFrom: 'plan' | 'sent';
  plan: string;
  /** Fate of the best-ranked passage, if the turn has passages. */
  rank1Fate?: Fate;
  /** API-reported prompt tokens and the difference reported − used. */
  usage?: { prompt: number; drift: number };
  /** Plain-words notes (slow or huge segments, plan/sent differences). */
  notes: string[];
  /** Grounding and passage diagnostics (docs/grounding.md), when the audit ran them. */
  analysis?: TurnAnalysis;
}

export interface AuditSummary {
  turns: number;
  overBudget: number;
  overBeforePassages: number;
  rank1Clipped: number;
  rank1Dropped: number;
  spill: number;
  malformed: number;
  conversations: number;
}

export interface AuditOptions {
  /** Overrides window − reserve. */
  budget?: number;
  reserve?: number;
  encoding?: string;
  plan?: string;
}

/** The JSON output of `spillway audit --format json` (schema `spillway.audit/1`). */
export interface AuditReport {
  schema: 'spillway.audit/1';
  file: string;
  options: AuditOptions;
  records: Ledger[];
  errors: LogIssue[];
  summary: AuditSummary;
  /** Log-level grounding figures, when the audit ran the analysis. */
  analysisSummary?: AnalysisSummary;
}
