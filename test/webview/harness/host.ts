/**
 * A stand-in for the extension host, for the screenshot harness: answers the panel's requests
 * from a log audited by the real core (reader → ledger → view models), so every figure on the
 * screenshots comes from the real encoder. Token boundaries come from the real encoder too.
 */
import { readFileSync } from 'node:fs';
import { basename } from 'node:path';
import { auditText } from '../../../extension/core/audit/audit';
import { readLogText } from '../../../extension/core/log/reader';
import { buildOverview, conversationRows, toTurnDetail, turnPage } from '../../../extension/core/view/viewModels';
import type { AuditedLog, AuditedRecord } from '../../../extension/core/view/audited';
import { decodeBytes, isEncodingName, loadEncoder } from '../../../extension/core/tokens/encoder';
import type { HostMessage, TurnDetail, TurnRow, WebviewMessage } from '../../../extension/protocol/messages';

export interface Host {
  file: string;
  turns: number;
  reply(msg: WebviewMessage): Promise<HostMessage[]>;
  log?: AuditedLog;
}

/** UTF-16 offsets where each token of `text` ends (a token ending inside a character adds no offset). */
export async function tokenEnds(text: string, encoding: string): Promise<number[]> {
  if (!isEncodingName(encoding)) return [];
  const enc = await loadEncoder(encoding);
  const dec = new TextDecoder('utf-8', { fatal: false });
  const out: number[] = [];
  let at = 0;
  for (const id of enc.encode(text)) {
    at += dec.decode(decodeBytes(enc, [id]), { stream: true }).length;
    if (out[out.length - 1] !== at) out.push(at);
  }
  return out;
}

export async function auditedHost(path: string): Promise<Host> {
  const text = readFileSync(path, 'utf8');
  const report = await auditText(text, { file: path });
  const byLine = new Map(readLogText(text).records.map((r) => [r.line, r.record]));
  const records: AuditedRecord[] = report.records.map((ledger) => ({ line: ledger.line, ledger, record: byLine.get(ledger.line)! }));
  const log: AuditedLog = { file: basename(path), records, issues: report.errors };
  const details = new Map<number, TurnDetail>();
  const detail = (line: number): TurnDetail | undefined => {
    if (!details.has(line)) {
      const r = records.find((x) => x.line === line);
      if (r) details.set(line, toTurnDetail(r));
    }
    return details.get(line);
  };
  return {
    file: log.file,
    turns: records.length,
    log,
    async reply(m) {
      switch (m.type) {
        case 'requestTurns':
          return [{ type: 'turns', requestId: m.requestId, ...turnPage(log, m.offset, m.limit) }];
        case 'requestTurn': {
          const d = detail(m.line);
          return d ? [{ type: 'turn', requestId: m.requestId, detail: d }] : [{ type: 'error', requestId: m.requestId, message: `No record on line ${m.line}` }];
        }
        case 'requestConversation':
          return [{ type: 'conversation', requestId: m.requestId, conversation: m.conversation, rows: conversationRows(log, m.conversation) }];
        case 'requestOverview':
          return [{ type: 'overview', requestId: m.requestId, overview: buildOverview(log) }];
        case 'requestTokenBoundaries': {
          const d = detail(m.line);
          const seg = d?.segments.find((s) => s.id === m.segmentId);
          return [{ type: 'tokenBoundaries', requestId: m.requestId, line: m.line, segmentId: m.segmentId, boundaries: seg ? await tokenEnds(seg.text, d!.encoding) : [] }];
        }
        default:
          return [];
      }
    },
  };
}

/** Rows for the scale check: 100,000 synthetic turns (numbers are made up, only the list is exercised). */
export function syntheticHost(total: number): Host {
  const row = (i: number): TurnRow => {
    const budget = 7168;
    const used = 3000 + ((i * 7919) % 5200);
    return {
      line: i + 1, conversation: `synthetic-${Math.floor(i / 12)}`, turn: (i % 12) + 1, used, budget, window: 8192, reserve: 1024,
      state: used > budget ? 'over-budget' : 'ok', byKind: { instructions: 220, history: used - 2400, query: 40, passage: 2000, tool: 0 }, framing: 140, joins: 0,
      clipped: i % 5 === 0 ? 1 : 0, dropped: i % 7 === 0 ? 2 : 0, rank1Fate: i % 11 === 0 ? 'dropped' : 'kept',
    };
  };
  return {
    file: 'synthetic-100k.jsonl',
    turns: total,
    async reply(m) {
      if (m.type === 'requestTurns') {
        const rows: TurnRow[] = [];
        for (let i = m.offset; i < Math.min(total, m.offset + m.limit); i++) rows.push(row(i));
        return [{ type: 'turns', requestId: m.requestId, offset: m.offset, total, rows }];
      }
      if (m.type === 'requestTurn') {
        const r = row(m.line - 1);
        return [{ type: 'turn', requestId: m.requestId, detail: { row: r, model: 'synthetic', encoding: 'o200k_base', framingProfile: 'chat', plan: 'recent-first', fatesFrom: 'plan', free: Math.max(0, r.budget - r.used), over: Math.max(0, r.used - r.budget), spill: 0, notes: ['Synthetic row for the scale check.'], segments: [] } }];
      }
      if (m.type === 'requestConversation') {
        const k = Number(m.conversation.split('-')[1]);
        return [{ type: 'conversation', requestId: m.requestId, conversation: m.conversation, rows: Array.from({ length: 12 }, (_, j) => row(k * 12 + j)) }];
      }
      return [];
    },
  };
}
