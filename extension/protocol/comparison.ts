/**
 * View models of the re-pack comparison and the sweep, as they travel to the panel webview.
 * Pure types (no vscode, no DOM); built by extension/core/view/comparison.ts.
 */
import type { Fate, SegmentKind } from '../core/log/types';
import type { CutPoint, TurnState } from '../core/audit/types';
import type { ComparisonTotals } from '../core/repack/compare';
import type { SweepCell } from '../core/repack/sweep';

export type { ComparisonTotals, SweepCell };

/** How one turn fared in the re-pack: worse = evidence retention or reply support went down. */
export type ComparisonVerdict = 'worse' | 'better' | 'changed' | 'same';

/** One turn of the comparison list (compact: the host keeps up to tens of thousands). */
export interface ComparisonRow {
  /** 1-based line of the record in the source log (a); the row's key. */
  line: number;
  /** 1-based line of the same turn in the re-packed log (b). */
  lineB: number;
  conversation: string;
  turn: number;
  verdict: ComparisonVerdict;
  usedA: number;
  usedB: number;
  budgetA: number;
  budgetB: number;
  stateA: TurnState;
  stateB: TurnState;
  /** Passage ids sent in a and dropped in b (at most ROW_IDS), and how many there are in all. */
  lost: string[];
  lostCount: number;
  gained: string[];
  gainedCount: number;
  historyDropped: number;
  historyGained: number;
  /** Evidence retention (kept / tokens of the evidence passages), null when the turn has no evidence. */
  evidenceA: number | null;
  evidenceB: number | null;
  evidenceBasis?: 'evidence' | 'best-passage';
  /** Reply support (share of reply tokens found in sent passages), null without a reply. */
  supportA: number | null;
  supportB: number | null;
}

export interface ComparisonSummary {
  /** Increases with every new comparison; pages and turns of an older one are ignored. */
  generation: number;
  /** Display names of the source (a) and the re-packed log (b). */
  source: string;
  target: string;
  /** What the re-pack changed ("budget 4,096 · plan evidence-first · encoding kept"). */
  options: string;
  totals: ComparisonTotals;
  /** Rows the host keeps (worse first); `omitted` turns were left out to bound memory (never worse ones first). */
  rows: number;
  omitted: number;
  malformed: number;
  copiedVerbatim: number;
  seconds: number;
}

/** Difference of one segment between the two packings. */
export type SegmentDiff = 'lost' | 'gained' | 'cut-more' | 'cut-less' | 'same' | 'only-a' | 'only-b';

export interface ComparisonSegment {
  id: string;
  kind: SegmentKind;
  rank?: number;
  tokens: number;
  keptTokens: number;
  fate: Fate;
  cut?: CutPoint;
  diff: SegmentDiff;
  /** The first characters of the segment's text (untrusted: render as text). */
  preview: string;
}

export interface ComparisonSide {
  line: number;
  model: string;
  encoding: string;
  plan: string;
  window: number;
  reserve: number;
  budget: number;
  used: number;
  state: TurnState;
  /** Segments in this packing's prompt order. */
  segments: ComparisonSegment[];
}

export interface ComparisonTurnView {
  generation: number;
  row: ComparisonRow;
  a: ComparisonSide;
  b: ComparisonSide;
}

export interface SweepView {
  file: string;
  records: number;
  malformed: number;
  budgets: number[];
  plans: string[];
  ks: (number | null)[];
  cells: SweepCell[];
  /** Prices were set (`spillway.prices`): cells carry costPer1000Turns. */
  priced: boolean;
  seconds: number;
}
