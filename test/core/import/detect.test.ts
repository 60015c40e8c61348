import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { detectFormat } from '../../../extension/core/import/detect';

const FIX = join(__dirname, '../../fixtures/import');
const firstLines = (f: string): string[] => readFileSync(join(FIX, f), 'utf8').split('\n').slice(0, 5);

describe('detectFormat', () => {
  it('recognises the fixtures', () => {
    expect(detectFormat(firstLines('chat-requests.jsonl'))).toBe('chat');
    expect(detectFormat(firstLines('otel-traces.jsonl'))).toBe('otlp');
    expect(detectFormat(firstLines('otel-single-document.json'))).toBe('otlp');
  });

  it('recognises a Spillway v1 record, an API-shaped chat log, and says nothing about other text', () => {
    expect(detectFormat(['{"v":1,"conversation":"c","turn":1,"model":{"name":"gpt-4o","window":8192,"reserve":512},"segments":[]}'])).toBe('spillway');
    expect(detectFormat(['', '{"request":{"model":"gpt-4o","messages":[]}}'])).toBe('chat');
    expect(detectFormat(['\uFEFF{"messages": [{"role": "user", "content": "hi"}]}'])).toBe('chat');
    expect(detectFormat(['hello world'])).toBeUndefined();
    expect(detectFormat(['{"event":"heartbeat"}'])).toBeUndefined();
    expect(detectFormat([])).toBeUndefined();
  });

  it('finds the key past a long first value without parsing the whole line', () => {
    const long = '{"meta":"' + 'x'.repeat(10_000) + '","messages":[{"role":"user","content":"hi"}]}';
    expect(detectFormat([long])).toBe('chat');
  });
});
