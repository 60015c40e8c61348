/** Hand-made comparison rows, turns and sweep results shared by the re-pack host, protocol and webview tests. */
import type { TurnComparison } from '../../extension/core/repack/compare';
import type { ComparisonRow, ComparisonSummary, ComparisonTurnView, SweepView } from '../../extension/protocol/comparison';
import type { HostMessage, WebviewMessage } from '../../extension/protocol/messages';

const side = (used: number, budget: number) => ({ model: 'gpt-4o-mini', used, budget, state: 'ok' as const, plan: 'recent-first', encoding: 'o200k_base' });

/** A turn that lost its evidence passage p2 (120 tokens sent whole in a, dropped in b) and history turn 1. */
export function turnComparison(over: Partial<TurnComparison> = {}): TurnComparison {
  return {
    line: 3,
    lineB: 3,
    conversation: 'trip-7',
    turn: 2,
    a: side(3900, 7168),
    b: side(1980, 2048),
    gained: [],
    lost: ['p2', 'p3'],
    passages: [],
    historyDropped: [1],
    historyGained: [],
    evidence: { basis: 'evidence', ids: ['p2'], tokensA: 120, keptA: 120, tokensB: 120, keptB: 0, retentionA: 1, retentionB: 0 },
    replySupport: { a: 0.8, b: 0.25 },
    changed: true,
    worse: true,
    better: false,
    ...over,
  };
}

export const ROW: ComparisonRow = {
  line: 3, lineB: 3, conversation: 'trip-7', turn: 2, verdict: 'worse', usedA: 3900, usedB: 1980, budgetA: 7168, budgetB: 2048, stateA: 'ok', stateB: 'ok',
  lost: ['p2', 'p3'], lostCount: 2, gained: [], gainedCount: 0, historyDropped: 1, historyGained: 0, evidenceA: 1, evidenceB: 0, evidenceBasis: 'evidence', supportA: 0.8, supportB: 0.25,
};

export const TOTALS: ComparisonSummary['totals'] = {
  turns: 10, changed: 4, worse: 2, better: 1, passagesGained: 1, passagesLost: 5, historyTurnsDropped: 3, historyTurnsGained: 0, evidenceTurns: 8,
  evidenceRetentionA: 0.9, evidenceRetentionB: 0.6, evidenceWholeA: 7, evidenceWholeB: 5, replySupportA: 0.7, replySupportB: 0.55, tokensA: 39000, tokensB: 19800,
};

export const SUMMARY: ComparisonSummary = {
  generation: 1, source: 'logs/trips.jsonl', target: 'logs/trips.repacked-own-plan-2048.jsonl', options: 'budget 2,048 · each record’s own plan · encoding kept',
  totals: TOTALS, rows: 10, omitted: 0, malformed: 0, copiedVerbatim: 0, seconds: 0.4,
};

export const PAYLOAD = '<img src=x onerror="window.__pwned=1"><script>window.__pwned=1</script>';

export const TURN_VIEW: ComparisonTurnView = {
  generation: 1,
  row: ROW,
  a: {
    line: 3, model: 'gpt-4o-mini', encoding: 'o200k_base', plan: 'recent-first', window: 8192, reserve: 1024, budget: 7168, used: 3900, state: 'ok',
    segments: [
      { id: 'sys', kind: 'instructions', tokens: 300, keptTokens: 300, fate: 'kept', diff: 'same', preview: 'You help riders.' },
      { id: 'p2', kind: 'passage', rank: 1, tokens: 120, keptTokens: 120, fate: 'kept', diff: 'lost', preview: PAYLOAD },
      { id: 'p4', kind: 'passage', rank: 3, tokens: 400, keptTokens: 400, fate: 'kept', diff: 'cut-more', preview: 'Night buses run hourly.' },
    ],
  },
  b: {
    line: 3, model: 'gpt-4o-mini', encoding: 'o200k_base', plan: 'recent-first', window: 3072, reserve: 1024, budget: 2048, used: 1980, state: 'ok',
    segments: [
      { id: 'sys', kind: 'instructions', tokens: 300, keptTokens: 300, fate: 'kept', diff: 'same', preview: 'You help riders.' },
      { id: 'p2', kind: 'passage', rank: 1, tokens: 120, keptTokens: 0, fate: 'dropped', diff: 'lost', preview: PAYLOAD },
      { id: 'p4', kind: 'passage', rank: 3, tokens: 400, keptTokens: 150, fate: 'clipped', cut: { token: 150, char: 600 }, diff: 'cut-more', preview: 'Night buses run hourly.' },
    ],
  },
};

const cell = (budget: number, plan: string, ret: number | null, tokens: number, cost?: number) => ({
  budget, plan, k: null, turns: 10, tokens, meanTokens: tokens / 10, evidenceTurns: 8, evidenceRetention: ret, evidenceWhole: 5, overBeforePassages: 0, rank1Lost: 1,
  ...(cost !== undefined ? { costPer1000Turns: cost } : {}),
});

export const SWEEP: SweepView = {
  file: 'logs/trips.jsonl', records: 10, malformed: 0, budgets: [2048, 4096], plans: ['recent-first', 'evidence-first'], ks: [null],
  cells: [cell(2048, 'recent-first', 0.5, 19000, 2.85), cell(2048, 'evidence-first', 0.75, 19500, 2.925), cell(4096, 'recent-first', 0.875, 35000, 5.25), cell(4096, 'evidence-first', 1, 36000, 5.4)],
  priced: true, seconds: 1.2,
};

/** One valid example of each re-pack message (spread into the protocol tests' exhaustive tables). */
export const COMPARISON_WEBVIEW_EXAMPLES: { [K in 'requestComparisonPage' | 'requestComparisonTurn']: Extract<WebviewMessage, { type: K }>[] } = {
  requestComparisonPage: [{ type: 'requestComparisonPage', requestId: 11, offset: 0, limit: 200 }],
  requestComparisonTurn: [{ type: 'requestComparisonTurn', requestId: 12, line: 3 }],
};

export const COMPARISON_HOST_EXAMPLES: { [K in 'comparisonReady' | 'comparisonPage' | 'comparisonTurn' | 'sweepReady']: Extract<HostMessage, { type: K }>[] } = {
  comparisonReady: [{ type: 'comparisonReady', summary: SUMMARY, reveal: true }],
  comparisonPage: [{ type: 'comparisonPage', requestId: 11, generation: 1, offset: 0, total: 1, rows: [ROW] }],
  comparisonTurn: [{ type: 'comparisonTurn', requestId: 12, view: TURN_VIEW }],
  sweepReady: [{ type: 'sweepReady', sweep: SWEEP, reveal: false }],
};
