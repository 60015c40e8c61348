import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import Ajv from 'ajv';
import { get_encoding, type TiktokenEncoding } from 'tiktoken';
import { DEFAULT_MALFORMED_RATE, generateEntries, generateLog, utf8Length, type GeneratorOptions } from '../../../extension/core/sample/generator';
import { buildKnowledgeBase, makeArticle } from '../../../extension/core/sample/knowledgeBase';
import { mulberry32 } from '../../../extension/core/sample/prng';
import { ENCODINGS } from '../../../extension/core/tokens/encoder';
import type { LogRecord } from '../../../extension/core/log/types';

const take = (opts: GeneratorOptions): string[] => [...generateLog(opts)];

describe('mulberry32', () => {
  it('is reproducible and spreads values over [0, 1)', () => {
    const a = mulberry32(42);
    const b = mulberry32(42);
    const xs = Array.from({ length: 10_000 }, () => a.next());
    expect(Array.from({ length: 10_000 }, () => b.next())).toEqual(xs);
    expect(Math.min(...xs)).toBeGreaterThanOrEqual(0);
    expect(Math.max(...xs)).toBeLessThan(1);
    // Mean of a uniform [0,1) sample of 10,000 lies within 0.5 ± 0.01 (standard error 0.0029, so ±3.4σ).
    const mean = xs.reduce((s, x) => s + x, 0) / xs.length;
    expect(Math.abs(mean - 0.5)).toBeLessThan(0.01);
  });
});

describe('sample log generator', () => {
  it('gives the same bytes for the same seed and different bytes for another seed', () => {
    const one = take({ seed: 7, turns: 300 }).join('\n');
    const again = take({ seed: 7, turns: 300 }).join('\n');
    const other = take({ seed: 8, turns: 300 }).join('\n');
    expect(again).toBe(one);
    expect(other).not.toBe(one);
  });

  it('is lazy: the first line of an endless log comes without building the rest', () => {
    const it = generateLog({ seed: 1, turns: Number.MAX_SAFE_INTEGER });
    const first = it.next();
    expect(first.done).toBe(false);
    expect(JSON.parse(first.value as string).v).toBe(1);
  });

  it('writes complete v1 records (checked against the JSON Schema) except the lines made malformed', () => {
    const schema = JSON.parse(readFileSync('schema/spillway-log-v1.schema.json', 'utf8')) as object;
    const validate = new Ajv({ allErrors: true }).compile(schema);
    let malformed = 0;
    let good = 0;
    for (const { text, malformed: isBad } of generateEntries({ seed: 3, turns: 1500, malformedRate: 0.02 })) {
      if (isBad) {
        malformed++;
        expect(() => JSON.parse(text)).toThrow();
        continue;
      }
      good++;
      const rec = JSON.parse(text) as LogRecord;
      expect(validate(rec), JSON.stringify(validate.errors)).toBe(true);
      expect(rec.framing).toBe('chat');
      expect(rec.plan).toBe('recent-first');
      expect(ENCODINGS).toContain(rec.model.encoding);
      expect(rec.model.reserve).toBeLessThan(rec.model.window);
      expect(typeof rec.reply).toBe('string');
      const ids = rec.segments.map((s) => s.id);
      expect(new Set(ids).size).toBe(ids.length);
      // History is re-sent: turn t carries the user and assistant text of turns 1 … t−1.
      expect(rec.segments.filter((s) => s.kind === 'history')).toHaveLength(2 * (rec.turn - 1));
      for (const s of rec.segments.filter((x) => x.kind === 'passage')) {
        expect(typeof s.score).toBe('number');
        expect(s.source).toMatch(/^https:\/\/[a-z.]+\.example\//);
        expect(s.date).toMatch(/^\d{4}-\d{2}-\d{2}$/);
        expect(s.text).not.toMatch(/\{\w+\}/); // every template slot was filled
      }
    }
    // 1500 lines at p = 0.02: expected 30 malformed, standard deviation √(1500·0.02·0.98) ≈ 5.4.
    expect(malformed).toBeGreaterThan(10);
    expect(malformed).toBeLessThan(55);
    expect(good + malformed).toBe(1500);
  });

  it('writes no malformed line when the rate is 0; the default rate is 1 in 50,000', () => {
    expect([...generateEntries({ seed: 5, turns: 2000, malformedRate: 0 })].some((e) => e.malformed)).toBe(false);
    // The rate itself is exercised statistically above (p = 0.02); at the default rate a useful sample
    // is ~10^5 lines, too slow for a unit test: docs/sample-workspace.md records a 1 GiB run
    // (88,027 lines, 2 malformed; expected 1.8).
    expect(DEFAULT_MALFORMED_RATE).toBe(1 / 50_000);
  });

  it('runs conversations of 3–40 consecutive turns', () => {
    const turns = new Map<string, number[]>();
    for (const line of generateLog({ seed: 9, turns: 3000, malformedRate: 0 })) {
      const r = JSON.parse(line) as LogRecord;
      const list = turns.get(r.conversation) ?? [];
      list.push(r.turn);
      turns.set(r.conversation, list);
    }
    const lengths: number[] = [];
    for (const list of turns.values()) {
      expect(list).toEqual(list.map((_, i) => i + 1));
      lengths.push(list.length);
    }
    // The last few conversations may be cut off by the line limit; finished ones have 3–40 turns.
    expect(Math.max(...lengths)).toBeLessThanOrEqual(40);
    expect(lengths.filter((n) => n >= 3).length).toBeGreaterThan(lengths.length - 4);
    expect(turns.size).toBeGreaterThan(50);
  });

  it('repeats passages: few unique passage texts among all retrieved', () => {
    let occurrences = 0;
    let historyChars = 0;
    let totalChars = 0;
    const unique = new Set<string>();
    for (const line of generateLog({ seed: 4, turns: 3000, malformedRate: 0 })) {
      totalChars += line.length;
      const r = JSON.parse(line) as LogRecord;
      for (const s of r.segments) {
        if (s.kind === 'passage') {
          occurrences++;
          unique.add(s.text);
        } else if (s.kind === 'history') historyChars += s.text.length;
      }
    }
    const share = unique.size / occurrences;
    // Measured 2026-12-01 for this seed: see docs/sample-workspace.md. Realistic repetition means most
    // retrieved passages were retrieved before.
    expect(share).toBeLessThan(0.25);
    expect(share).toBeGreaterThan(0.01);
    expect(historyChars / totalChars).toBeGreaterThan(0.2);
  });

  it('shows the passage pool is fixed: article n is the same whatever the pool size', () => {
    const small = buildKnowledgeBase(123, 50);
    expect(small.articles[37]).toEqual(makeArticle(123, 37));
    expect(buildKnowledgeBase(123, 3000).articles[37]).toEqual(small.articles[37]);
    const texts = new Set(buildKnowledgeBase(123, 3000).articles.map((a) => a.text));
    expect(texts.size).toBeGreaterThan(2990); // varied: (almost) no two articles alike
  });

  it('stops after about maxBytes', () => {
    let bytes = 0;
    for (const line of generateLog({ seed: 2, maxBytes: 200_000 })) bytes += utf8Length(line) + 1;
    expect(bytes).toBeGreaterThanOrEqual(200_000);
    expect(bytes).toBeLessThan(200_000 + 400_000); // overshoot is at most one record (< 400 kB here)
  });

  it('utf8Length agrees with Buffer.byteLength', () => {
    for (const s of ['', 'abc', '£4.50', 'Zones A–B', '→', '🚋 tram', '\u202e', 'a\ud800b'])
      expect(utf8Length(s)).toBe(Buffer.byteLength(s));
  });

  it('reports usage with the published chat framing, checked with tiktoken (independent BPE)', () => {
    const encs = new Map<string, ReturnType<typeof get_encoding>>();
    const tk = (text: string, enc: string): number => {
      let e = encs.get(enc);
      if (!e) encs.set(enc, (e = get_encoding(enc as TiktokenEncoding)));
      return e.encode_ordinary(text).length;
    };
    try {
      let withUsage = 0;
      let exact = 0;
      for (const line of generateLog({ seed: 6, turns: 400, malformedRate: 0, maxTurns: 8, count: tk })) {
        const r = JSON.parse(line) as LogRecord;
        if (!r.usage) continue;
        withUsage++;
        const enc = r.model.encoding as string;
        // OpenAI cookbook "How to count tokens with tiktoken": per message 3 + role + content; +3 priming.
        const framed = 3 + r.segments.reduce((s, seg) => s + 3 + tk(seg.role, enc) + tk(seg.text, enc), 0);
        const drift = (r.usage.prompt as number) - framed;
        expect(drift).toBeGreaterThanOrEqual(0);
        expect(drift).toBeLessThanOrEqual(12);
        if (drift === 0) exact++;
        expect(framed).toBeLessThanOrEqual(r.model.window - r.model.reserve);
        expect(r.usage.completion).toBe(tk(r.reply as string, enc));
      }
      expect(withUsage).toBeGreaterThan(30);
      expect(exact / withUsage).toBeGreaterThan(0.8);
    } finally {
      for (const e of encs.values()) e.free();
    }
  });
});
