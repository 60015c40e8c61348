import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { convertText } from '../../../extension/core/import/index';
import { parseRecordLine } from '../../../extension/core/log/validate';
import type { LogRecord, Segment } from '../../../extension/core/log/types';

const FIX = join(__dirname, '../../fixtures/import');
const text = readFileSync(join(FIX, 'chat-requests.jsonl'), 'utf8');
const sourceLines = text.split('\n');
const result = convertText(text, 'chat');
const byLine = (n: number): LogRecord => result.records.find((r) => r.line === n)!.record;
const kinds = (r: LogRecord): string[] => r.segments.map((s) => `${s.kind}:${s.id}`);

/** The messages of a fixture line, read straight from the JSON (independently of the importer). */
function sourceMessages(line: number): Array<{ role: string; content: unknown; name?: string }> {
  const o = JSON.parse(sourceLines[line - 1]!);
  return (o.request?.messages ?? o.messages) as Array<{ role: string; content: unknown; name?: string }>;
}

/** Segment texts of each prompt message, joined the way Spillway renders them: a blank line. */
function rendered(r: LogRecord): Map<number, string> {
  const m = new Map<number, string[]>();
  for (const s of r.segments) {
    if (!m.has(s.message!)) m.set(s.message!, []);
    m.get(s.message!)!.push(s.text);
  }
  return new Map([...m].map(([k, v]) => [k, v.join('\n\n')]));
}

describe('chat-message log import (fixture chat-requests.jsonl)', () => {
  it('converts the four good requests and the one with an unknown role; skips the broken and foreign lines', () => {
    expect(result.records.map((r) => r.line)).toEqual([1, 2, 3, 4, 7]);
  });

  it('every converted record is a valid v1 record (checked by the log reader\'s own validator)', () => {
    for (const r of result.records) {
      const back = parseRecordLine(JSON.stringify(r.record), r.line);
      expect('record' in back ? 'ok' : back.issue.message).toBe('ok');
    }
  });

  it('byte offsets are the UTF-8 offsets of each line start', () => {
    for (const r of result.records) {
      const before = sourceLines.slice(0, r.line - 1).join('\n');
      expect(r.offset).toBe(r.line === 1 ? 0 : Buffer.byteLength(before, 'utf8') + 1);
    }
  });

  it('line 1: instructions, query text outside the passages, three tagged passages ranked in order', () => {
    const r = byLine(1);
    expect(kinds(r)).toEqual(['instructions:m0', 'query:m1.1', 'passage:kb-ferry-3', 'passage:kb-pass-1', 'passage:kb-bike-2']);
    expect(r.segments.filter((s) => s.kind === 'passage').map((s) => s.rank)).toEqual([1, 2, 3]);
    expect(r.segments[1]!.text).toBe('When does the first ferry leave Saltmarsh Quay on Sunday?');
    expect(r.segments.slice(1).every((s) => s.message === 1)).toBe(true);
    expect(r).toMatchObject({ conversation: 'conv-ferry-1', turn: 1, model: { name: 'gpt-4o-mini', window: 128000, reserve: 4096 } });
    expect(r.usage).toEqual({ prompt: 188, completion: 19, total_tokens: 207 });
    expect(r.reply).toBe('On Sundays the first Tidewater ferry leaves Saltmarsh Quay at 08:30.');
    // fields the importer does not map are kept
    expect(r['chat']).toEqual({ temperature: 0.2 });
    expect(r.sent!.every((s) => s.fate === 'kept')).toBe(true);
  });

  it('line 2: history turn 1 (user + assistant), scores set the ranks, reserve from max_tokens', () => {
    const r = byLine(2);
    expect(kinds(r)).toEqual(['instructions:m0', 'history:m1', 'history:m2', 'passage:kb-bike-2', 'passage:kb-pass-1', 'query:m3.1']);
    expect(r.segments.filter((s) => s.kind === 'history').map((s) => s.turn)).toEqual([1, 1]);
    expect(r.turn).toBe(2);
    // scores 0.61 and 0.83: the higher one is rank 1 although it comes second
    expect(r.segments.filter((s) => s.kind === 'passage').map((s) => [s.id, s.rank, s.score])).toEqual([
      ['kb-bike-2', 2, 0.61],
      ['kb-pass-1', 1, 0.83],
    ]);
    expect(r.model.reserve).toBe(512);
    expect(r.time).toBe('2026-11-28T09:14:05Z');
  });

  it('line 3: request/response shape, image part not mapped, numbered passages on single newlines merged', () => {
    const r = byLine(3);
    expect(r.conversation).toBe('web-7f3a');
    expect(r.turn).toBe(4);
    expect(r.model).toMatchObject({ name: 'gpt-4.1-mini', reserve: 400 });
    expect(r.usage).toMatchObject({ prompt: 402, completion: 18 });
    expect(r.reply).toBe('Lost items are kept at the travel centre at Harbour Central for 28 days.');
    expect(kinds(r)).toEqual(['instructions:m0', 'query:m1.1', 'passage:1']);
    expect(r.segments[2]!['ids']).toEqual(['1', '2']);
    const codes = result.issues.filter((i) => i.line === 3).map((i) => i.code);
    expect(codes).toEqual(['import-unmapped', 'import-merged', 'import-merged']);
    expect(result.issues.find((i) => i.line === 3)!.message).toMatch(/image_url/);
  });

  it('line 4: passages in the system message and a separate user message, a missing id, a named user, tool message', () => {
    const r = byLine(4);
    expect(kinds(r)).toEqual(['instructions:m0.1', 'passage:kb-conc-4', 'query:m1.1', 'passage:kb-pass-1', 'passage:p3', 'query:m2', 'tool:m4']);
    expect(r.segments.filter((s) => s.kind === 'passage').map((s) => s.rank)).toEqual([1, 2, 3]);
    expect(r.segments.find((s) => s.id === 'm2')!.name).toBe('rider_2291');
    expect(r.conversation).toBe('thr-concession-9');
    const issues = result.issues.filter((i) => i.line === 4);
    expect(issues.map((i) => i.code)).toEqual(['import-missing-id', 'import-unmapped']);
    expect(issues[1]!.message).toMatch(/tool call/);
    // columns point at the message in the line
    const line4 = sourceLines[3]!;
    expect(line4.slice(issues[0]!.column - 1).startsWith('{"role": "user", "content": "Context')).toBe(true);
    expect(line4.slice(issues[1]!.column - 1).startsWith('{"role": "assistant", "content": null')).toBe(true);
  });

  it('reports the broken line, the foreign line and the unknown role with line and column', () => {
    const rest = result.issues.filter((i) => i.line >= 5).map((i) => [i.line, i.code]);
    expect(rest).toEqual([
      [5, 'bad-json'],
      [6, 'import-skipped'],
      [7, 'import-unmapped'],
    ]);
    const bad = result.issues.find((i) => i.line === 5)!;
    // the line is 56 characters long and the string is unterminated at its end
    expect(sourceLines[4]!.length).toBe(56);
    expect(bad.column).toBe(57);
    expect(result.issues.find((i) => i.line === 7)!.message).toMatch(/role "critic"/);
    expect(kinds(byLine(7))).toEqual(['instructions:m0', 'query:m2']);
  });

  it('round-trip: for every record, each prompt message re-joins to the original content byte for byte', () => {
    for (const line of [1, 2, 4, 7]) {
      const r = byLine(line);
      const original = sourceMessages(line).filter((m) => typeof m.content === 'string' && m.role !== 'critic');
      const back = rendered(r);
      expect([...back.values()]).toEqual(original.map((m) => m.content));
    }
    // line 3: a multimodal message; its text parts are joined with a blank line
    const parts = sourceMessages(3)[1]!.content as Array<{ type: string; text?: string }>;
    const texts = parts.filter((p) => p.type === 'text').map((p) => p.text!);
    expect(rendered(byLine(3)).get(1)).toBe(texts.join('\n\n'));
  });

  it('history turns and conversation ids are inferred when absent', () => {
    const line = JSON.stringify({
      model: 'gpt-4o',
      messages: [
        { role: 'system', content: 'S' },
        { role: 'user', content: 'u1' },
        { role: 'assistant', content: 'a1' },
        { role: 'user', content: 'u2' },
        { role: 'assistant', content: 'a2' },
        { role: 'user', content: 'u3' },
      ],
    });
    const r = convertText(line, 'chat').records[0]!.record;
    expect(r.turn).toBe(3);
    expect(r.segments.map((s: Segment) => s.turn ?? null)).toEqual([null, 1, 1, 2, 2, null]);
    // same opening (system + first user message) → same conversation id on a later request
    const later = JSON.parse(line);
    later.messages.push({ role: 'assistant', content: 'a3' }, { role: 'user', content: 'u4' });
    const r2 = convertText(JSON.stringify(later), 'chat').records[0]!.record;
    expect(r2.conversation).toBe(r.conversation);
    expect(r.conversation).toMatch(/^chat-[0-9a-f]{8}$/);
  });

  it('options: splitter none, role kind override, query message index, window, encoding, sent none', () => {
    const r = convertText(sourceLines[0]!, 'chat', {
      splitter: { kind: 'none' },
      roleKinds: { system: 'history' },
      window: 16384,
      reserve: 1024,
      sent: 'none',
    }).records[0]!.record;
    expect(kinds(r)).toEqual(['history:m0', 'query:m1']);
    expect(r.model).toMatchObject({ window: 16384, reserve: 1024 });
    expect(r.sent).toBeUndefined();
    const q = convertText(sourceLines[1]!, 'chat', { queryMessage: 1 }).records[0]!.record;
    expect(q.segments.find((s) => s.id === 'm1')!.kind).toBe('query');
    const unknownModel = convertText(JSON.stringify({ model: 'harbour-llm-7b', messages: [{ role: 'user', content: 'hi' }] }), 'chat').records[0]!.record;
    expect(unknownModel.model.encoding).toBe('o200k_base');
  });

  it('a regex splitter with a captured score', () => {
    const line = JSON.stringify({
      model: 'gpt-4o',
      messages: [{ role: 'user', content: 'Which ticket?\n\nDOC kb-1 (0.2): Day Rover text\n\nDOC kb-2 (0.9): Weekly Anchor text' }],
    });
    const r = convertText(line, 'chat', { splitter: { kind: 'regex', pattern: '^DOC (?<id>\\S+) \\((?<score>[\\d.]+)\\): (?<text>.*)$' } }).records[0]!.record;
    expect(r.segments.map((s) => [s.kind, s.id, s.rank ?? null])).toEqual([
      ['query', 'm0.1', null],
      ['passage', 'kb-1', 2],
      ['passage', 'kb-2', 1],
    ]);
    expect(r.segments.map((s) => s.text).join('\n\n')).toBe(JSON.parse(line).messages[0].content);
  });
});

describe('other chat request spellings', () => {
  it('Anthropic-style top-level system text and text blocks', () => {
    const line = JSON.stringify({
      model: 'claude-sonnet-x', max_tokens: 256, system: 'Be brief.',
      messages: [{ role: 'user', content: [{ type: 'text', text: 'Hi' }, { type: 'image', source: { type: 'base64', data: 'AA==' } }] }],
      usage: { input_tokens: 20, output_tokens: 5 },
    });
    const r = convertText(line, 'chat');
    const rec = r.records[0]!.record;
    expect(rec.segments.map((s) => [s.kind, s.role, s.text])).toEqual([
      ['instructions', 'system', 'Be brief.'],
      ['query', 'user', 'Hi'],
    ]);
    expect(rec.usage).toEqual({ prompt: 20, completion: 5 });
    expect(rec.model).toMatchObject({ name: 'claude-sonnet-x', reserve: 256, encoding: 'o200k_base' });
    // the image issue points at the user message (index 0 in the source array, 1 after the system text)
    expect(r.issues.map((i) => i.code)).toEqual(['import-unmapped']);
    expect(line.slice(r.issues[0]!.column - 1).startsWith('{"role":"user"')).toBe(true);
  });

  it('Gemini-style contents with parts, role model, systemInstruction, usageMetadata and candidates', () => {
    const line = JSON.stringify({
      model: 'gemini-x',
      systemInstruction: { parts: [{ text: 'Answer from the sources.' }] },
      contents: [
        { role: 'user', parts: [{ text: 'Hello' }] },
        { role: 'model', parts: [{ text: 'Hi, how can I help?' }] },
        { role: 'user', parts: [{ text: 'Night bus to Dunmere Park?' }] },
      ],
      response: { candidates: [{ content: { role: 'model', parts: [{ text: 'Take the N2.' }] } }], usageMetadata: { promptTokenCount: 40, candidatesTokenCount: 4 } },
    });
    const rec = convertText(line, 'chat').records[0]!.record;
    expect(rec.segments.map((s) => `${s.kind}:${s.role}:${s.turn ?? '-'}`)).toEqual(['instructions:system:-', 'history:user:1', 'history:assistant:1', 'query:user:-']);
    expect(rec.reply).toBe('Take the N2.');
    expect(rec.usage).toEqual({ prompt: 40, completion: 4 });
  });
});

describe('separator splitter and split layout through the importer', () => {
  const content = 'Read these:\n\n---\nThe Lantern Loop runs every 12 minutes.\n\n---\nThe Copperway closes at midnight.\n\n---\n\nWhich line runs later?';
  const line = JSON.stringify({ model: 'gpt-4o', messages: [{ role: 'user', content }] });

  it('exact: passages start at their separator line and the message re-joins byte for byte', () => {
    const r = convertText(line, 'chat', { splitter: { kind: 'separator' } });
    const rec = r.records[0]!.record;
    expect(rec.segments.map((s) => [s.kind, s.id, s.text])).toEqual([
      ['query', 'm0.1', 'Read these:'],
      ['passage', 'p1', '---\nThe Lantern Loop runs every 12 minutes.'],
      ['passage', 'p2', '---\nThe Copperway closes at midnight.'],
      ['query', 'm0.2', '---\n\nWhich line runs later?'],
    ]);
    expect(rec.segments.map((s) => s.text).join('\n\n')).toBe(content);
    expect(r.issues).toEqual([]);
  });

  it('split: passage text only, and the change of the rendered message is reported', () => {
    const r = convertText(line, 'chat', { splitter: { kind: 'separator' }, layout: 'split' });
    expect(r.records[0]!.record.segments.map((s) => s.text)).toEqual(['Read these:', 'The Lantern Loop runs every 12 minutes.', 'The Copperway closes at midnight.', '---\n\nWhich line runs later?']);
    expect(r.issues.map((i) => i.code)).toEqual(['import-reflowed']);
  });
});
