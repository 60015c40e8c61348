/**
 * The one message protocol between the extension host and the panel webview.
 * Each direction is a discriminated union keyed on `type`. The webview sends `ready` first;
 * requests carry a `requestId` that the reply echoes. The host validates every incoming
 * message with `parseWebviewMessage` (see validate.ts) before acting on it.
 * Pure types: no vscode, no DOM.
 */
import type { Fate, SegmentKind, Role } from '../core/log/types';
import type { CutPoint, KindTotals, TurnState } from '../core/audit/types';
import type { GroundingView } from './grounding';
import type { ComparisonRow, ComparisonSummary, ComparisonTurnView, SweepView } from './comparison';

export type * from './comparison';

/** One row of the paged turn list / timeline. Small: the panel may hold thousands. */
export interface TurnRow {
  /** 1-based line of the record in the log file; the stable key of a turn. */
  line: number;
  conversation: string;
  turn: number;
  used: number;
  budget: number;
  window: number;
  reserve: number;
  state: TurnState;
  byKind: KindTotals;
  framing: number;
  joins: number;
  clipped: number;
  dropped: number;
  rank1Fate?: Fate;
}

export interface SegmentView {
  id: string;
  kind: SegmentKind;
  role: Role;
  rank?: number;
  score?: number;
  tokens: number;
  keptTokens: number;
  /** keptTokens / budget, 0..1+ */
  share: number;
  fate: Fate;
  cut?: CutPoint;
  planFate?: Fate;
  /** Only for the selected turn; untrusted text, render as text. */
  text: string;
  source?: string;
  date?: string;
}

export interface TurnDetail {
  row: TurnRow;
  model: string;
  encoding: string;
  framingProfile: string;
  plan: string;
  fatesFrom: 'plan' | 'sent';
  free: number;
  over: number;
  spill: number;
  usage?: { prompt: number; drift: number };
  notes: string[];
  segments: SegmentView[];
  reply?: string;
  /** Reply grounding (protocol/grounding.ts), when the audit ran the analysis. */
  grounding?: GroundingView;
}

export interface LogOverview {
  file: string;
  turns: number;
  conversations: number;
  overBudget: number;
  overBeforePassages: number;
  rank1Clipped: number;
  rank1Dropped: number;
  malformed: number;
  spill: number;
  /** Histogram of used/budget: bucket i counts turns in [i*10%, (i+1)*10%); the last bucket is ≥ 100%. */
  useHistogram: number[];
  /** Worst turns first (over-budget, then rank-1 lost, then spill). */
  worst: TurnRow[];
}

export interface PanelState {
  line?: number;
  segmentId?: string;
  view?: 'turn' | 'overview' | 'compare' | 'sweep';
}

// ---------------------------------------------------------------- webview → host
export type WebviewMessage =
  | { type: 'ready'; state?: PanelState }
  | { type: 'requestTurns'; requestId: number; offset: number; limit: number }
  | { type: 'requestTurn'; requestId: number; line: number }
  | { type: 'requestConversation'; requestId: number; conversation: string }
  | { type: 'requestOverview'; requestId: number }
  | { type: 'requestTokenBoundaries'; requestId: number; line: number; segmentId: string }
  | { type: 'revealLine'; line: number; segmentId?: string }
  /** A measurement from the panel for the host to log (firstPaintMs: script start → first turn view painted). */
  | { type: 'metric'; name: 'firstPaintMs'; value: number }
  /** Re-pack comparison (extension/host/repack.ts): a page of the worse-first list, and one turn's two packings. */
  | { type: 'requestComparisonPage'; requestId: number; offset: number; limit: number }
  | { type: 'requestComparisonTurn'; requestId: number; line: number };

// ---------------------------------------------------------------- host → webview
export type HostMessage =
  | { type: 'logOpened'; file: string; turns: number; selectLine?: number }
  | { type: 'logClosed' }
  | { type: 'turns'; requestId: number; offset: number; total: number; rows: TurnRow[] }
  | { type: 'turn'; requestId: number; detail: TurnDetail }
  | { type: 'conversation'; requestId: number; conversation: string; rows: TurnRow[] }
  | { type: 'overview'; requestId: number; overview: LogOverview }
  | { type: 'tokenBoundaries'; requestId: number; line: number; segmentId: string; boundaries: number[] }
  /** The editor cursor moved to another record: select it. */
  | { type: 'selectTurn'; line: number }
  | { type: 'progress'; done: number; total?: number; label: string }
  | { type: 'error'; requestId?: number; message: string }
  /** A re-pack finished: its totals; the list follows page by page on request. `reveal`: switch to the Compare view. */
  | { type: 'comparisonReady'; summary: ComparisonSummary; reveal: boolean }
  | { type: 'comparisonPage'; requestId: number; generation: number; offset: number; total: number; rows: ComparisonRow[] }
  | { type: 'comparisonTurn'; requestId: number; view: ComparisonTurnView }
  /** A sweep finished: evidence retention and tokens per budget × plan (× k). */
  | { type: 'sweepReady'; sweep: SweepView; reveal: boolean };

export type WebviewMessageType = WebviewMessage['type'];
export type HostMessageType = HostMessage['type'];
