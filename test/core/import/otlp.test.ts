import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { convertLines, convertText, textLines } from '../../../extension/core/import/index';
import { anyValue } from '../../../extension/core/import/otlp';
import { parseRecordLine } from '../../../extension/core/log/validate';
import type { LogRecord } from '../../../extension/core/log/types';

const FIX = join(__dirname, '../../fixtures/import');
const text = readFileSync(join(FIX, 'otel-traces.jsonl'), 'utf8');
const result = convertText(text, 'otlp');
const bySpan = (id: string): LogRecord => result.records.find((r) => (r.record['otel'] as { spanId: string }).spanId === id)!.record;
const kinds = (r: LogRecord): string[] => r.segments.map((s) => `${s.kind}:${s.id}`);

/** Messages of a span as the fixture wrote them (read without the importer). */
function spanAttr(line: number, spanId: string, key: string): unknown {
  const doc = JSON.parse(text.split('\n')[line - 1]!);
  const span = doc.resourceSpans[0].scopeSpans[0].spans.find((s: { spanId: string }) => s.spanId === spanId);
  const v = span.attributes.find((a: { key: string }) => a.key === key).value;
  return v.stringValue !== undefined ? JSON.parse(v.stringValue) : v;
}

describe('OTLP/JSON import (fixture otel-traces.jsonl)', () => {
  it('one record per model-call span, at the line of the span', () => {
    expect(result.records.map((r) => [r.line, (r.record['otel'] as { spanId: string }).spanId])).toEqual([
      [1, 'a1a1a1a1a1a1a1a1'],
      [2, 'c3c3c3c3c3c3c3c3'],
      [4, 'e5e5e5e5e5e5e5e5'],
      [5, 'b8b8b8b8b8b8b8b8'],
    ]);
    for (const r of result.records) expect('record' in parseRecordLine(JSON.stringify(r.record), r.line)).toBe(true);
  });

  it('trace A: retrieval span listed after the model call still supplies scores; unknown attributes kept', () => {
    const r = bySpan('a1a1a1a1a1a1a1a1');
    expect(kinds(r)).toEqual(['instructions:m0', 'query:m1.1', 'passage:kb-pass-1', 'passage:kb-ferry-3']);
    expect(r.segments.filter((s) => s.kind === 'passage').map((s) => [s.rank, s.score, s.source])).toEqual([
      [1, 0.91, 'kb-rider-help'],
      [2, 0.42, 'kb-rider-help'],
    ]);
    expect(r).toMatchObject({ conversation: 'conv-otel-pass', model: { name: 'gpt-4o-mini', reserve: 300 }, usage: { prompt: 149, completion: 14 } });
    expect(r.reply).toBe('No. The Tidewater Pass does not cover the Estuary Express.');
    expect(r.time).toBe('2025-11-28T09:34:05.400Z');
    const otel = r['otel'] as { attributes: Record<string, unknown>; resource: Record<string, unknown>; retrieval: Array<{ spanId: string; attributes: Record<string, unknown> }> };
    expect(otel.attributes).toEqual({ 'gen_ai.provider.name': 'openai', 'harbourline.release': '2026.11.3' });
    expect(otel.resource).toEqual({ 'service.name': 'rider-help', 'deployment.environment.name': 'staging' });
    expect(otel.retrieval.map((x) => x.spanId)).toEqual(['b2b2b2b2b2b2b2b2']);
    expect(otel.retrieval[0]!.attributes['gen_ai.retrieval.query.text']).toBe('Tidewater Pass Estuary Express');
    // the third document has neither text nor a passage in the prompt
    expect(result.issues.filter((i) => i.line === 1).map((i) => i.code)).toEqual(['import-unmapped']);
    expect(result.issues.find((i) => i.line === 1)!.message).toMatch(/"kb-zone-8"/);
  });

  it('trace B: no retrieval span → a record without passages and an issue saying so', () => {
    const r = bySpan('c3c3c3c3c3c3c3c3');
    expect(kinds(r)).toEqual(['instructions:m0', 'query:m1']);
    expect(r.conversation).toBe('trace-0af7651916cd43dd8448eb211c80319c');
    const i = result.issues.filter((x) => x.line === 2);
    expect(i.map((x) => x.code)).toEqual(['import-no-retrieval']);
  });

  it('trace C: spans on two lines; documents matched by their text inside [n] blocks; a missing one reported', () => {
    const r = bySpan('e5e5e5e5e5e5e5e5');
    expect(kinds(r)).toEqual(['instructions:m0', 'history:m1', 'history:m2', 'passage:kb-night-5', 'passage:kb-conc-4', 'query:m3.1']);
    expect(r.turn).toBe(2);
    expect(r.segments.find((s) => s.id === 'kb-night-5')!.text.startsWith('[1] Night Owl N2')).toBe(true);
    const codes = result.issues.filter((x) => x.line === 4).map((x) => x.message);
    expect(codes).toHaveLength(2);
    expect(codes[0]).toMatch(/part 1 of type "uri"/);
    expect(codes[1]).toMatch(/"kb-lost-7".*not found in the prompt/);
  });

  it('trace D: older flattened gen_ai.prompt.N attributes, a datastore tool span, an agent span reported', () => {
    const r = bySpan('b8b8b8b8b8b8b8b8');
    expect(kinds(r)).toEqual(['instructions:m0', 'query:m1.1', 'passage:kb-bike-2']);
    expect(r.model.name).toBe('gpt-4');
    expect(r.usage).toEqual({ prompt: 92, completion: 21 });
    expect(r.reply).toBe('Yes. Before 09:30 on weekdays you need a Bike Carriage Permit on buses.');
    expect((r['otel'] as { attributes: Record<string, unknown> }).attributes).toEqual({ 'gen_ai.system': 'openai' });
    expect(result.issues.filter((x) => x.line === 5).map((x) => x.code)).toEqual(['import-skipped']);
    expect(result.issues.find((x) => x.line === 5)!.message).toMatch(/invoke_agent/);
  });

  it('round-trip: prompt messages re-join to the span\'s message texts byte for byte', () => {
    const a = bySpan('a1a1a1a1a1a1a1a1');
    const msgs = spanAttr(1, 'a1a1a1a1a1a1a1a1', 'gen_ai.input.messages') as Array<{ parts: Array<{ content: string }> }>;
    const joined = a.segments.filter((s) => s.message === 1).map((s) => s.text).join('\n\n');
    expect(joined).toBe(msgs[0]!.parts[0]!.content);
    const c = bySpan('e5e5e5e5e5e5e5e5');
    const cm = spanAttr(4, 'e5e5e5e5e5e5e5e5', 'gen_ai.input.messages') as Array<{ parts: Array<{ type: string; content?: string }> }>;
    expect(c.segments.filter((s) => s.message === 3).map((s) => s.text).join('\n\n')).toBe(cm[3]!.parts[0]!.content);
  });

  it('a single pretty-printed document: same record, line of the span object', () => {
    const doc = readFileSync(join(FIX, 'otel-single-document.json'), 'utf8');
    const r = convertText(doc, 'otlp');
    expect(r.records).toHaveLength(1);
    expect(r.records[0]!.record.segments).toEqual(bySpan('a1a1a1a1a1a1a1a1').segments);
    // the span object opens on the line before its "traceId" key
    const lines = doc.split('\n');
    const traceLine = lines.findIndex((l, i) => l.includes('"traceId"') && lines[i + 1]!.includes('"spanId": "a1a1a1a1a1a1a1a1"')) + 1;
    expect(r.records[0]!.line).toBe(traceLine - 1);
    expect(lines[traceLine - 2]!.trim()).toBe('{');
  });

  it('streaming gives the same records and issues as the whole-text path', async () => {
    const records: unknown[] = [];
    const issues: unknown[] = [];
    for await (const e of convertLines(textLines(text), 'otlp')) (e.type === 'record' ? records : issues).push(e.type === 'record' ? e.record : e.issue);
    expect(records).toEqual(result.records);
    expect(issues).toEqual(result.issues);
  });

  it('AnyValue decoding follows the OTLP/JSON mapping (64-bit ints as strings, nested lists and maps)', () => {
    expect(anyValue({ intValue: '42' })).toBe(42);
    expect(anyValue({ intValue: '9007199254740993' })).toBe('9007199254740993');
    expect(anyValue({ arrayValue: { values: [{ stringValue: 'a' }, { boolValue: true }] } })).toEqual(['a', true]);
    expect(anyValue({ kvlistValue: { values: [{ key: 'k', value: { doubleValue: 0.5 } }] } })).toEqual({ k: 0.5 });
  });

  it('bad lines are reported and the rest is converted', () => {
    const lines = text.split('\n');
    const broken = [lines[0], '{"resourceSpans": [', '{"foo": 1}', lines[1]].join('\n');
    const r = convertText(broken, 'otlp');
    expect(r.records.map((x) => x.line)).toEqual([1, 4]);
    expect(r.issues.filter((i) => i.line === 2 || i.line === 3).map((i) => [i.line, i.code])).toEqual([
      [2, 'bad-json'],
      [3, 'import-skipped'],
    ]);
  });
});

describe('OTLP edge cases', () => {
  const lines = text.split('\n');
  it('a span exported twice is used once and reported', () => {
    const r = convertText([lines[1], lines[1]].join('\n'), 'otlp');
    expect(r.records).toHaveLength(1);
    expect(r.issues.map((i) => [i.line, i.code])).toEqual([
      [1, 'import-no-retrieval'],
      [2, 'import-duplicate-span'],
    ]);
  });

  it('input messages that are not JSON are reported, not guessed', () => {
    const doc = JSON.parse(lines[1]!);
    const attrs = doc.resourceSpans[0].scopeSpans[0].spans[0].attributes as Array<{ key: string; value: unknown }>;
    attrs.find((a) => a.key === 'gen_ai.input.messages')!.value = { stringValue: '[{"role": "user", "parts": [' };
    const r = convertText(JSON.stringify(doc), 'otlp');
    expect(r.records).toHaveLength(0);
    expect(r.issues[0]!.message).toMatch(/not a JSON message list/);
  });
});

describe('OTLP: a broken first line', () => {
  it('is reported and the other lines are still converted (not mistaken for a pretty-printed document)', () => {
    const lines = text.split('\n');
    const r = convertText(['{"resourceSpans": [ broken', lines[1], lines[0]].join('\n'), 'otlp');
    expect(r.records.map((x) => x.line)).toEqual([2, 3]);
    expect(r.issues[0]).toMatchObject({ line: 1, code: 'bad-json' });
  });
});
