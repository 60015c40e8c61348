/**
 * Hand-made view models for the webview tests. Every derived figure is worked out by hand in the
 * comments (the tests compare against these written-out numbers, not against the code under test).
 */
import type { SegmentView, TurnDetail, TurnRow } from '../../extension/protocol/messages';

/** "Fares: a day pass costs £6.40. " is 31 UTF-16 units: 6+1+1+1+3+1+4+1+5+1+6+1 (£ is one unit). */
export const P2_KEPT = 'Fares: a day pass costs £6.40. ';
export const P2_SPILLED = 'Refunds are paid within ten working days of the claim.';
export const P2_TEXT = P2_KEPT + P2_SPILLED;

// window 8,192 − reserve 1,024 = budget 7,168.
// used = 412 + 3,250 + 58 + 3,106 + 0 + framing 140 + joins 6 = 6,972; free = 7,168 − 6,972 = 196.
// passages kept: p1 2,694 + p2 412 = 3,106. spill: p2 845 − 412 = 433, p3 777 → 1,210.
export const ROW: TurnRow = {
  line: 7,
  conversation: 'trip-0042',
  turn: 3,
  used: 6972,
  budget: 7168,
  window: 8192,
  reserve: 1024,
  state: 'ok',
  byKind: { instructions: 412, history: 3250, query: 58, passage: 3106, tool: 0 },
  framing: 140,
  joins: 6,
  clipped: 1,
  dropped: 1,
  rank1Fate: 'kept',
};

function seg(p: Partial<SegmentView> & Pick<SegmentView, 'id' | 'kind' | 'role' | 'tokens' | 'keptTokens' | 'fate' | 'text'>): SegmentView {
  return { share: p.keptTokens / 7168, ...p };
}

export const SEGMENTS: SegmentView[] = [
  seg({ id: 'sys', kind: 'instructions', role: 'system', tokens: 412, keptTokens: 412, fate: 'kept', text: 'You are the rider-help assistant.' }),
  seg({ id: 'h1', kind: 'history', role: 'user', tokens: 3250, keptTokens: 3250, fate: 'kept', text: 'Earlier question about night buses.' }),
  seg({ id: 'p1', kind: 'passage', role: 'system', rank: 1, score: 12.4, tokens: 2694, keptTokens: 2694, fate: 'kept', text: 'Night bus N4 runs every 30 minutes.' }),
  seg({ id: 'p2', kind: 'passage', role: 'system', rank: 2, score: 9.87, tokens: 845, keptTokens: 412, fate: 'clipped', cut: { token: 412, char: 31 }, text: P2_TEXT }),
  seg({ id: 'p3', kind: 'passage', role: 'system', rank: 3, score: 7.5, tokens: 777, keptTokens: 0, fate: 'dropped', text: 'Lost property is kept for 28 days.' }),
  seg({ id: 'q', kind: 'query', role: 'user', tokens: 58, keptTokens: 58, fate: 'kept', text: 'How much is a day pass?' }),
];

export const DETAIL: TurnDetail = {
  row: ROW,
  model: 'gpt-4o-mini',
  encoding: 'o200k_base',
  framingProfile: 'chat',
  plan: 'recent-first',
  fatesFrom: 'plan',
  free: 196,
  over: 0,
  spill: 1210,
  notes: [],
  segments: SEGMENTS,
  reply: 'A day pass costs £6.40.',
};

/** Rows of a conversation: history growing, the budget constant. */
export function conversationRows(n: number, conversation = 'trip-0042'): TurnRow[] {
  return Array.from({ length: n }, (_, i) => ({ ...ROW, conversation, line: 5 + i, turn: i + 1, byKind: { ...ROW.byKind, history: 500 * i } }));
}

/** Untrusted texts that would run or inject markup if inserted as HTML. */
export const PAYLOADS = [
  '<script>window.__spillwayPwned=1</script>',
  '<img src=x onerror="window.__spillwayPwned=2">',
  '<svg onload=window.__spillwayPwned=3><circle r=4></circle></svg>',
  '<a href="javascript:window.__spillwayPwned=4">fare table</a>',
  '</textarea></pre><iframe srcdoc="<script>parent.__spillwayPwned=5</script>"></iframe>',
  '<style>body{display:none}</style><b onmouseover=alert(1)>x</b>',
];
