/** Hand-made ledgers and records for the host's pure tests (figures chosen by hand, not computed by the code under test). */
import type { Ledger, SegmentLedger } from '../../extension/core/audit/types';
import type { LogRecord } from '../../extension/core/log/types';
import type { AuditedRecord } from '../../extension/core/view/audited';

export function seg(p: Partial<SegmentLedger> & Pick<SegmentLedger, 'id' | 'kind'>): SegmentLedger {
  return { role: p.kind === 'instructions' ? 'system' : 'user', message: 0, tokens: 10, keptTokens: 10, fate: 'kept', ...p };
}

export function ledger(p: Partial<Ledger> = {}): Ledger {
  return {
    line: 1,
    conversation: 'c-1',
    turn: 1,
    model: 'gpt-4o',
    encoding: 'o200k_base',
    window: 8192,
    reserve: 1024,
    budget: 7168,
    framingProfile: 'chat',
    framing: 12,
    joins: 0,
    used: 7034,
    free: 134,
    over: 0,
    spill: 0,
    full: 7034,
    byKind: { instructions: 100, history: 3000, query: 20, passage: 3902, tool: 0 },
    segments: [],
    state: 'ok',
    fatesFrom: 'plan',
    plan: 'recent-first',
    notes: [],
    ...p,
  };
}

export function record(p: Partial<LogRecord> = {}): LogRecord {
  return {
    v: 1,
    conversation: 'c-1',
    turn: 1,
    model: { name: 'gpt-4o', window: 8192, reserve: 1024 },
    segments: [],
    ...p,
  };
}

export function audited(line: number, l: Partial<Ledger> = {}, r: Partial<LogRecord> = {}): AuditedRecord {
  return { line, ledger: ledger({ line, ...l }), record: record(r) };
}
