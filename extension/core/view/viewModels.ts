/**
 * Ledger → the view models the panel receives (extension/protocol/messages.ts). The panel only ever
 * gets a page of rows, one turn's detail (the only place texts travel), one conversation, or the overview.
 */
import type { Ledger } from '../audit/types';
import type { LogRecord } from '../log/types';
import type { LogOverview, SegmentView, TurnDetail, TurnRow } from '../../protocol/messages';
import type { AuditedLog, AuditedRecord } from './audited';
import { toGroundingView } from './grounding';

export const MAX_PAGE = 500;
export const MAX_CONVERSATION_ROWS = 5000;
export const WORST_TURNS = 20;

export function toTurnRow(ledger: Ledger): TurnRow {
  let clipped = 0;
  let dropped = 0;
  for (const s of ledger.segments) {
    if (s.kind !== 'passage') continue;
    if (s.fate === 'clipped') clipped++;
    else if (s.fate === 'dropped') dropped++;
  }
  const row: TurnRow = {
    line: ledger.line,
    conversation: ledger.conversation,
    turn: ledger.turn,
    used: ledger.used,
    budget: ledger.budget,
    window: ledger.window,
    reserve: ledger.reserve,
    state: ledger.state,
    byKind: { ...ledger.byKind },
    framing: ledger.framing,
    joins: ledger.joins,
    clipped,
    dropped,
  };
  if (ledger.rank1Fate) row.rank1Fate = ledger.rank1Fate;
  return row;
}

function str(v: unknown): string | undefined {
  return typeof v === 'string' ? v : undefined;
}

/** `wordsOf`: the analysis' word tokenizer, for the grounding view (see toGroundingView). */
export function toTurnDetail(rec: Pick<AuditedRecord, 'record' | 'ledger'>, wordsOf?: (text: string) => string[]): TurnDetail {
  const { ledger, record } = rec;
  const byId = new Map<string, LogRecord['segments'][number]>();
  for (const s of record.segments) if (!byId.has(s.id)) byId.set(s.id, s);
  const segments: SegmentView[] = ledger.segments.map((s) => {
    const src = byId.get(s.id);
    const v: SegmentView = {
      id: s.id,
      kind: s.kind,
      role: s.role,
      tokens: s.tokens,
      keptTokens: s.keptTokens,
      share: ledger.budget > 0 ? s.keptTokens / ledger.budget : 0,
      fate: s.fate,
      text: src?.text ?? '',
    };
    if (s.rank !== undefined) v.rank = s.rank;
    if (s.score !== undefined) v.score = s.score;
    if (s.cut) v.cut = { ...s.cut };
    if (s.planFate) v.planFate = s.planFate;
    const source = str(src?.source);
    if (source !== undefined) v.source = source;
    const date = str(src?.date);
    if (date !== undefined) v.date = date;
    return v;
  });
  const detail: TurnDetail = {
    row: toTurnRow(ledger),
    model: ledger.model,
    encoding: ledger.encoding,
    framingProfile: ledger.framingProfile,
    plan: ledger.plan,
    fatesFrom: ledger.fatesFrom,
    free: ledger.free,
    over: ledger.over,
    spill: ledger.spill,
    notes: [...ledger.notes],
    segments,
  };
  if (ledger.usage) detail.usage = { ...ledger.usage };
  if (typeof record.reply === 'string') detail.reply = record.reply;
  if (ledger.analysis) detail.grounding = toGroundingView(ledger.analysis, record, ledger, wordsOf);
  return detail;
}

/** One page of rows; offset/limit are clamped (limit to MAX_PAGE). */
export function turnPage(log: AuditedLog, offset: number, limit: number): { offset: number; total: number; rows: TurnRow[] } {
  const total = log.records.length;
  const from = Math.min(Math.max(0, Math.floor(offset)), total);
  const to = Math.min(total, from + Math.min(Math.max(0, Math.floor(limit)), MAX_PAGE));
  return { offset: from, total, rows: log.records.slice(from, to).map((r) => toTurnRow(r.ledger)) };
}

/** Rows of one conversation in line order (at most MAX_CONVERSATION_ROWS, the latest kept when longer). */
export function conversationRows(log: AuditedLog, conversation: string): TurnRow[] {
  const rows = log.records.filter((r) => r.ledger.conversation === conversation).map((r) => toTurnRow(r.ledger));
  return rows.length > MAX_CONVERSATION_ROWS ? rows.slice(rows.length - MAX_CONVERSATION_ROWS) : rows;
}

/** Ordering key for "worst first": over-budget (by tokens over), then rank-1 lost, then spill. */
function badness(l: Ledger): [number, number, number, number] {
  return [l.state !== 'ok' ? 1 : 0, l.over, l.rank1Fate === 'dropped' ? 2 : l.rank1Fate === 'clipped' ? 1 : 0, l.spill];
}

export function buildOverview(log: AuditedLog): LogOverview {
  const useHistogram = new Array<number>(11).fill(0);
  const conversations = new Set<string>();
  const o: LogOverview = {
    file: log.file,
    turns: log.records.length,
    conversations: 0,
    overBudget: 0,
    overBeforePassages: 0,
    rank1Clipped: 0,
    rank1Dropped: 0,
    malformed: log.issues.length,
    spill: 0,
    useHistogram,
    worst: [],
  };
  for (const { ledger: l } of log.records) {
    conversations.add(l.conversation);
    if (l.state === 'over-budget') o.overBudget++;
    if (l.state === 'over-before-passages') {
      o.overBudget++;
      o.overBeforePassages++;
    }
    if (l.rank1Fate === 'clipped') o.rank1Clipped++;
    if (l.rank1Fate === 'dropped') o.rank1Dropped++;
    o.spill += l.spill;
    const share = l.budget > 0 ? l.used / l.budget : Infinity;
    const bucket = Math.min(10, Math.floor(share * 10));
    useHistogram[bucket]!++;
  }
  o.conversations = conversations.size;
  const worst = log.records
    .map((r) => r.ledger)
    .filter((l) => l.state !== 'ok' || (l.rank1Fate !== undefined && l.rank1Fate !== 'kept') || l.spill > 0);
  worst.sort((a, b) => {
    const ka = badness(a);
    const kb = badness(b);
    for (let i = 0; i < ka.length; i++) if (ka[i] !== kb[i]) return kb[i]! - ka[i]!;
    return a.line - b.line;
  });
  o.worst = worst.slice(0, WORST_TURNS).map(toTurnRow);
  return o;
}
