import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { auditText } from '../../../extension/core/audit/audit';
import type { Ledger } from '../../../extension/core/audit/types';
import { convertText } from '../../../extension/core/import/index';
import { refChatTokens } from '../../support/reference';

const FIX = join(__dirname, '../../fixtures/import');
const chatText = readFileSync(join(FIX, 'chat-requests.jsonl'), 'utf8');
const chatLines = chatText.split('\n');

const SYSTEM =
  'You are the rider-help assistant of Harbourline Transit. Answer from the passages you are given. ' +
  'If they do not hold the answer, say so and point the rider to help.harbourline.example.';

/**
 * Line 2 of chat-requests.jsonl written natively, by hand: the same prompt as a Spillway log author
 * would record it (texts copied from the fixture generator, not from the importer's output).
 */
const NATIVE_LINE_2 = {
  v: 1,
  conversation: 'conv-ferry-1',
  turn: 2,
  model: { name: 'gpt-4o-mini', window: 128000, reserve: 512 },
  segments: [
    { id: 'sys', kind: 'instructions', role: 'system', text: SYSTEM, message: 0 },
    { id: 'h1u', kind: 'history', role: 'user', text: 'When does the first ferry leave Saltmarsh Quay on Sunday?', turn: 1, message: 1 },
    { id: 'h1a', kind: 'history', role: 'assistant', text: 'On Sundays the first Tidewater ferry leaves Saltmarsh Quay at 08:30.', turn: 1, message: 2 },
    {
      id: 'kb-bike-2', kind: 'passage', role: 'user', rank: 2, score: 0.61, message: 3,
      text: '<doc id="kb-bike-2" score="0.61">Bikes ride free on the ferry. On buses a Bike Carriage Permit is needed before 09:30 on weekdays.</doc>',
    },
    {
      id: 'kb-pass-1', kind: 'passage', role: 'user', rank: 1, score: 0.83, message: 3,
      text: '<doc id="kb-pass-1" score="0.83">A Tidewater Pass covers the ferry and every bus in Zones A–B. It does not cover the Estuary Express.</doc>',
    },
    { id: 'q', kind: 'query', role: 'user', text: 'Can I take my bike on it, and does my Tidewater Pass cover it?', message: 3 },
  ],
};

/** The fields a ledger shares between two writings of one prompt (ids differ, so segments compare by position). */
function comparable(l: Ledger) {
  return {
    used: l.used,
    full: l.full,
    framing: l.framing,
    joins: l.joins,
    budget: l.budget,
    free: l.free,
    over: l.over,
    spill: l.spill,
    byKind: l.byKind,
    state: l.state,
    rank1Fate: l.rank1Fate,
    segments: l.segments.map((s) => ({ kind: s.kind, role: s.role, message: s.message, rank: s.rank, tokens: s.tokens, keptTokens: s.keptTokens, fate: s.fate, cut: s.cut })),
  };
}

async function ledgerOf(records: object[], budget?: number): Promise<Ledger[]> {
  const report = await auditText(records.map((r) => JSON.stringify(r)).join('\n') + '\n', budget === undefined ? {} : { budget });
  expect(report.errors).toEqual([]);
  return report.records;
}

describe('the ledger of an imported record equals the ledger of the same prompt written natively', () => {
  const imported = convertText(chatLines[1]!, 'chat', { sent: 'none' }).records[0]!.record;

  it('same totals and fates under the record\'s own budget', async () => {
    const [a] = await ledgerOf([imported]);
    const [b] = await ledgerOf([NATIVE_LINE_2]);
    expect(comparable(a!)).toEqual(comparable(b!));
    expect(a!.segments.every((s) => s.fate === 'kept')).toBe(true);
  });

  it('same totals and fates under a budget that forces clipping and dropping', async () => {
    // 170 tokens: less than the whole prompt (checked below), so the plan must cut something.
    const [a] = await ledgerOf([imported], 170);
    const [b] = await ledgerOf([NATIVE_LINE_2], 170);
    expect(a!.full).toBeGreaterThan(170);
    expect(a!.segments.some((s) => s.fate !== 'kept')).toBe(true);
    expect(comparable(a!)).toEqual(comparable(b!));
  });

  it('the imported prompt counts like the original request, checked with tiktoken and the cookbook rule', async () => {
    // Every fixture request whose messages are plain strings: the ledger's `used` (all kept) must equal the
    // reference count of the ORIGINAL messages (tiktoken WASM, o200k_base for gpt-4o*, chat framing
    // 3 per message + role + 1 per name + 3 priming, OpenAI cookbook "How to count tokens with tiktoken").
    const result = convertText(chatText, 'chat');
    for (const line of [1, 2, 4]) {
      const rec = result.records.find((r) => r.line === line)!.record;
      const [l] = await ledgerOf([rec]);
      const source = JSON.parse(chatLines[line - 1]!) as { messages: Array<{ role: string; content: string | null; name?: string }> };
      const sent = source.messages.filter((m) => typeof m.content === 'string') as Array<{ role: string; content: string; name?: string }>;
      expect(l!.fatesFrom).toBe('sent');
      expect(l!.used).toBe(refChatTokens('o200k_base', sent));
    }
  });

  it('an OTLP record counts like its span\'s messages (system instructions + input messages)', async () => {
    const otel = readFileSync(join(FIX, 'otel-traces.jsonl'), 'utf8');
    const rec = convertText(otel, 'otlp').records[0]!.record;
    const [l] = await ledgerOf([rec]);
    const doc = JSON.parse(otel.split('\n')[0]!);
    const span = doc.resourceSpans[0].scopeSpans[0].spans[0];
    const attr = (k: string) => JSON.parse(span.attributes.find((a: { key: string }) => a.key === k).value.stringValue);
    const sys = attr('gen_ai.system_instructions') as Array<{ content: string }>;
    const input = attr('gen_ai.input.messages') as Array<{ role: string; parts: Array<{ content: string }> }>;
    const messages = [{ role: 'system', content: sys[0]!.content }, ...input.map((m) => ({ role: m.role, content: m.parts[0]!.content }))];
    expect(l!.used).toBe(refChatTokens('o200k_base', messages));
  });
});

describe('imported records open in the audit directly', () => {
  it('auditing importedLogItems equals auditing the converted log file', async () => {
    const { auditItems } = await import('../../../extension/core/audit/audit');
    const { importedLogItems, textLines } = await import('../../../extension/core/import/index');
    const direct = await auditItems(importedLogItems(textLines(chatText), 'chat'), {});
    const converted = convertText(chatText, 'chat').records.map((r) => JSON.stringify(r.record)).join('\n') + '\n';
    const viaFile = await auditText(converted, {});
    // same ledgers apart from the line (source line vs converted-log line)
    expect(direct.records.map((l) => ({ ...l, line: 0 }))).toEqual(viaFile.records.map((l) => ({ ...l, line: 0 })));
    expect(direct.records.map((l) => l.line)).toEqual([1, 2, 3, 4, 7]);
    // only the lines that gave no record count as malformed: the broken line 5 and the heartbeat line 6
    expect(direct.errors.map((e) => [e.line, e.code])).toEqual([
      [5, 'bad-json'],
      [6, 'import-skipped'],
    ]);
    expect(direct.summary.malformed).toBe(2);
  });
});
