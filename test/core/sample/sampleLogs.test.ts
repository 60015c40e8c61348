/**
 * The hand-written sample logs show what they claim to show. Every figure here is a token count from the
 * real encoder (gpt-tokenizer via loadEncoder, cross-checked with tiktoken, an independent BPE), and the
 * packing conclusions are worked out by hand in the comments with the published chat framing rule
 * (OpenAI cookbook, "How to count tokens with tiktoken": 3 tokens per message + the role's tokens +
 * the content's tokens, +3 to prime the reply; "system", "user" and "assistant" are 1 token each in both
 * encodings, so every message here costs its text + 4) and the recent-first plan (instructions and query
 * always; history turns newest first, whole, until one does not fit; passages by rank, the first that
 * does not fit clipped when ≥ 32 of its tokens fit, the rest dropped).
 * This test does not use the project's packer: it is the independent check of the designed scenarios.
 */
import { readFileSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { get_encoding } from 'tiktoken';
import { loadEncoder, type Encoder, type EncodingName } from '../../../extension/core/tokens/encoder';
import type { LogRecord, Segment } from '../../../extension/core/log/types';

const DIR = 'sample-workspace/logs';
const encoders = new Map<string, Encoder>();

beforeAll(async () => {
  for (const name of ['o200k_base', 'cl100k_base'] as const) encoders.set(name, await loadEncoder(name));
});

function readLines(file: string): string[] {
  return readFileSync(`${DIR}/${file}`, 'utf8').split('\n').filter((l) => l.length > 0);
}
function readRecords(file: string): LogRecord[] {
  const out: LogRecord[] = [];
  for (const line of readLines(file)) {
    try {
      out.push(JSON.parse(line) as LogRecord);
    } catch {
      // lost-property.jsonl holds one deliberately malformed line; it is checked on its own below.
    }
  }
  return out;
}
const enc = (r: LogRecord): Encoder => encoders.get(r.model.encoding as string) as Encoder;
const tokens = (r: LogRecord, text: string): number => enc(r).count(text);
const seg = (r: LogRecord, id: string): Segment => {
  const s = r.segments.find((x) => x.id === id);
  if (!s) throw new Error(`no segment ${id} in ${r.conversation} turn ${r.turn}`);
  return s;
};
/** Text tokens of a segment, and the cost of its own chat message (text + 3 + 1 for the role). */
const t = (r: LogRecord, id: string): number => tokens(r, seg(r, id).text);
/** Cost of one whole history turn (its user and assistant messages). */
const historyTurn = (r: LogRecord, turn: number): number =>
  r.segments.filter((s) => s.kind === 'history' && s.turn === turn).reduce((sum, s) => sum + tokens(r, s.text) + 4, 0);
/** The first `n` tokens of a text, decoded: what a clip at token n keeps. */
const head = (r: LogRecord, text: string, n: number): string => enc(r).decode(enc(r).encode(text).slice(0, n));
const turnOf = (records: LogRecord[], turn: number): LogRecord => records.find((r) => r.turn === turn) as LogRecord;

describe('sample logs: all lines are v1 records (except the designed faults)', () => {
  const files = ['fares-and-passes.jsonl', 'long-trip-planning.jsonl', 'lost-property.jsonl', 'accessibility-and-service-changes.jsonl', 'hostile-payloads.jsonl'];
  it.each(files)('%s', (file) => {
    for (const r of readRecords(file)) {
      expect(r.v).toBe(1);
      expect(r.framing).toBe('chat');
      expect(r.plan).toBe('recent-first');
      expect(['o200k_base', 'cl100k_base']).toContain(r.model.encoding);
      for (const s of r.segments.filter((x) => x.kind === 'passage')) {
        expect(typeof s.rank).toBe('number');
        expect(typeof s.score).toBe('number');
        expect(s.source).toBeTruthy();
        expect(s.date).toMatch(/^\d{4}-\d{2}-\d{2}$/);
      }
    }
  });

  it('uses both encodings', () => {
    const used = new Set(files.flatMap((f) => readRecords(f).map((r) => r.model.encoding)));
    expect([...used].sort()).toEqual(['cl100k_base', 'o200k_base']);
  });

  it('gpt-tokenizer and tiktoken (independent BPE) agree on every segment of every sample log', () => {
    const ref = { o200k_base: get_encoding('o200k_base'), cl100k_base: get_encoding('cl100k_base') };
    try {
      const seen = new Set<string>(); // history repeats: check each distinct (encoding, text) once
      for (const f of files)
        for (const r of readRecords(f)) {
          const e = r.model.encoding as EncodingName;
          for (const s of [...r.segments.map((x) => x.text), r.reply ?? '']) {
            if (seen.has(e + '\u0000' + s)) continue;
            seen.add(e + '\u0000' + s);
            expect(tokens(r, s)).toBe(ref[e].encode_ordinary(s).length);
          }
        }
      expect(seen.size).toBeGreaterThan(100);
    } finally {
      ref.o200k_base.free();
      ref.cl100k_base.free();
    }
  });
});

describe('fares-and-passes.jsonl', () => {
  const recs = readRecords('fares-and-passes.jsonl');

  it('turn 4: the rank-1 passage is clipped and the answer lies after the cut', () => {
    const r = turnOf(recs, 4);
    expect(r.model.window - r.model.reserve).toBe(1024); // budget = 2048 − 1024
    expect(t(r, 'instructions')).toBe(275);
    expect(t(r, 'query')).toBe(40);
    expect([1, 2, 3].map((n) => historyTurn(r, n))).toEqual([70, 55, 70]);
    expect(t(r, 'kb-fares-contactless-capping')).toBe(605);
    // fixed = 3 priming + (275 + 4) instructions + (40 + 4) query = 326
    // history, newest first: 70 (turn 3) + 55 (turn 2) + 70 (turn 1) = 195, all fit: 326 + 195 = 521
    // room for passages = 1024 − 521 = 503; rank 1 needs 605 + 4 = 609 > 503 → clipped,
    // keeping 503 − 4 = 499 text tokens (≥ 32); ranks 2–4 are dropped.
    expect(1024 - (3 + 279 + 44) - (70 + 55 + 70) - 4).toBe(499);
    const kept = head(r, seg(r, 'kb-fares-contactless-capping').text, 499);
    expect(seg(r, 'kb-fares-contactless-capping').text).toContain('Zones A–B: £31.50');
    expect(kept).not.toContain('£31.50'); // the weekly cap the rider asked for was cut away…
    expect(r.reply).toContain('£31.50'); // …and the reply states it anyway
    expect(r.evidence).toEqual(['kb-fares-contactless-capping']);
  });

  it('turn 5: the same passage is clipped harder (history grew)', () => {
    const r = turnOf(recs, 5);
    expect(t(r, 'instructions') + 4 + t(r, 'query') + 4 + 3).toBe(303);
    expect([1, 2, 3, 4].map((n) => historyTurn(r, n))).toEqual([70, 55, 70, 116]);
    // 303 + 311 = 614; room 1024 − 614 = 410 → 406 text tokens of 605 kept.
    expect(head(r, seg(r, 'kb-fares-contactless-capping').text, 406)).not.toContain('Weekly caps run from Monday to Sunday');
    expect(r.reply).toContain('Monday to Sunday');
  });

  it('carries the same fare table from two sources (near-duplicates), worded differently', () => {
    const r = turnOf(recs, 1);
    const a = seg(r, 'kb-fares-zone-table');
    const b = seg(r, 'news-2026-fare-changes');
    expect(a.source).not.toBe(b.source);
    expect(a.text).not.toBe(b.text);
    // Word-set Jaccard (words of 2+ letters/digits, lowercased): high but not 1.
    const words = (s: string): Set<string> => new Set(s.toLowerCase().match(/[a-z0-9£.]{2,}/g) ?? []);
    const [wa, wb] = [words(a.text), words(b.text)];
    const inter = [...wa].filter((w) => wb.has(w)).length;
    const jaccard = inter / (wa.size + wb.size - inter);
    expect(jaccard).toBeGreaterThan(0.6);
    expect(jaccard).toBeLessThan(1);
    for (const price of ['£2.10', '£2.90', '£3.80', '£1.90', '£5.60', '£7.40', '£9.90']) {
      expect(a.text).toContain(price);
      expect(b.text).toContain(price);
    }
  });

  it('reports API usage on turns 1–3, exact on 1 and 2 and drifting by 7 on turn 3', () => {
    // Turn 1: 3 + (275+4) + (152+4) + (138+4) + (112+4) + (12+4) = 712, everything fits (712 ≤ 1024).
    const r1 = turnOf(recs, 1);
    expect(3 + r1.segments.reduce((s, x) => s + tokens(r1, x.text) + 4, 0)).toBe(712);
    expect(r1.usage?.prompt).toBe(712);
    // Turn 3: 3 + 279 + 125 (history) + 174 + 156 + 142 + 116 + 19 = 1014 ≤ 1024; the API said 1021.
    const r3 = turnOf(recs, 3);
    expect(3 + r3.segments.reduce((s, x) => s + tokens(r3, x.text) + 4, 0)).toBe(1014);
    expect(r3.usage?.prompt).toBe(1021);
    expect(r3.usage?.completion).toBe(tokens(r3, r3.reply as string));
    expect(recs.filter((r) => r.usage).length).toBe(3);
    expect(recs.filter((r) => r.evidence).length).toBeGreaterThanOrEqual(4);
  });
});

describe('long-trip-planning.jsonl', () => {
  const recs = readRecords('long-trip-planning.jsonl');

  it('is one conversation of 14 turns whose history is re-sent and grows every turn', () => {
    expect(recs).toHaveLength(14);
    expect(new Set(recs.map((r) => r.conversation)).size).toBe(1);
    recs.forEach((r, i) => {
      expect(r.turn).toBe(i + 1);
      expect(r.segments.filter((s) => s.kind === 'history')).toHaveLength(2 * i);
    });
  });

  it('turn 9: history crowds the rank-1 passage down to a clip that loses the answer', () => {
    const r = turnOf(recs, 9);
    const hist = [1, 2, 3, 4, 5, 6, 7, 8].map((n) => historyTurn(r, n));
    expect(hist).toEqual([127, 95, 56, 85, 48, 98, 36, 92]); // sum 637
    // fixed = 3 + (275+4) + (20+4) = 306; 306 + 637 = 943 ≤ 1024, all history kept;
    // room = 1024 − 943 = 81; rank 1 (ferry timetable) needs 202 + 4 = 206 → clipped to 77 tokens.
    expect(3 + t(r, 'instructions') + 4 + t(r, 'query') + 4).toBe(306);
    expect(t(r, 'kb-ferry-summer-timetable')).toBe(202);
    expect(1024 - 306 - hist.reduce((a, b) => a + b, 0) - 4).toBe(77);
    const kept = head(r, seg(r, 'kb-ferry-summer-timetable').text, 77);
    expect(kept).not.toContain('The last ferry from Lowtide Island leaves at 20:00');
    expect(seg(r, 'kb-ferry-summer-timetable').text).toContain('no bus service runs from the island');
  });

  it('turn 10: the rank-1 passage is dropped (fewer than 32 tokens of room)', () => {
    const r = turnOf(recs, 10);
    // fixed = 3 + 279 + (19+4) = 305; history 637 + 55 (turn 9) = 692; 305 + 692 = 997;
    // room 1024 − 997 = 27, minus 4 framing = 23 text tokens < 32 → rank 1 dropped, and all after it.
    expect(3 + t(r, 'instructions') + 4 + t(r, 'query') + 4).toBe(305);
    expect([1, 2, 3, 4, 5, 6, 7, 8, 9].reduce((s, n) => s + historyTurn(r, n), 0)).toBe(692);
  });

  it('turn 12: a pasted itinerary puts the record over budget before any passage', () => {
    const r = turnOf(recs, 12);
    // 3 + (275+4) + (944+4) = 1230 > 1024.
    expect(t(r, 'query')).toBe(944);
    expect(3 + t(r, 'instructions') + 4 + t(r, 'query') + 4).toBe(1230);
  });

  it('turn 13: the newest history turn (the itinerary) does not fit, so no history is kept at all', () => {
    const r = turnOf(recs, 13);
    // fixed = 3 + 279 + (32+4) = 318; turn 12 costs (944+4) + (83+4) = 1035 > 1024 − 318 = 706.
    expect(historyTurn(r, 12)).toBe(1035);
    expect(3 + t(r, 'instructions') + 4 + t(r, 'query') + 4).toBe(318);
  });
});

describe('lost-property.jsonl', () => {
  const lines = readLines('lost-property.jsonl');
  const recs = readRecords('lost-property.jsonl');

  it('has one bad-JSON line and one record missing model.window; the other lines are complete', () => {
    expect(lines).toHaveLength(7);
    expect(() => JSON.parse(lines[3] as string)).toThrow(); // line 4: unescaped quotes in the query text
    const line5 = JSON.parse(lines[4] as string) as LogRecord;
    expect(line5.model.window).toBeUndefined();
    expect(recs.filter((r) => typeof r.model.window === 'number')).toHaveLength(5);
    expect(recs.every((r) => r.model.name === 'gpt-4' && r.model.encoding === 'cl100k_base')).toBe(true);
  });

  it('turn 1: the reply promises free postage, which no passage supports (the fees passage says the opposite)', () => {
    const r = turnOf(recs, 1);
    expect(r.reply).toContain('post the violin to your home free of charge');
    const passages = r.segments.filter((s) => s.kind === 'passage');
    expect(passages.some((p) => /free of charge/i.test(p.text))).toBe(false);
    expect(seg(r, 'kb-lost-property-fees').text).toContain('instruments, pushchairs and bicycles cannot be posted');
  });

  it('turn 2: the reply rests on a sentence that was clipped away', () => {
    const r = turnOf(recs, 2);
    // fixed = 3 + (276+4) + (18+4) = 305; history turn 1 = 116 → 421;
    // rank 1 report 131+4 and rank 2 office 82+4 fit: 421 + 135 + 86 = 642;
    // room 1024 − 642 = 382; rank 3 policy needs 462 + 4 → clipped to 378 tokens.
    expect(3 + t(r, 'instructions') + 4 + t(r, 'query') + 4).toBe(305);
    expect(historyTurn(r, 1)).toBe(116);
    expect([t(r, 'kb-lost-property-report'), t(r, 'kb-lost-property-office'), t(r, 'kb-lost-property-policy')]).toEqual([131, 82, 462]);
    const sentence = 'kept in the secure store at Bell Foundry for 90 days';
    expect(seg(r, 'kb-lost-property-policy').text).toContain(sentence);
    expect(head(r, seg(r, 'kb-lost-property-policy').text, 378)).not.toContain('secure store');
    expect(r.reply).toContain('secure store at Bell Foundry for 90 days');
  });

  it('turns 1 and 3 carry a stale passage (2021) that contradicts the 2025 one', () => {
    const r = turnOf(recs, 3);
    const stale = seg(r, 'kb-lost-property-office-2021');
    expect(stale.date).toBe('2021-03-15');
    expect(Date.parse(r.time as string) - Date.parse(stale.date as string)).toBeGreaterThan(5 * 365 * 86_400_000);
    expect(stale.text).toContain('Tannery Row');
    expect(seg(r, 'kb-lost-property-office').text).toContain('moved from Tannery Row');
  });

  it('turn 3: the assembler sent less than the plan would have', () => {
    const r = turnOf(recs, 3);
    // Whole prompt = 3 + (276+4) + 196 (history) + (57+4) + (82+4) + (131+4) + (13+4) = 778 ≤ 1024:
    // recent-first keeps everything, but the `sent` list says the 2025 office page was dropped.
    expect(3 + r.segments.reduce((s, x) => s + tokens(r, x.text) + 4, 0)).toBe(778);
    expect(r.sent?.find((s) => s.id === 'kb-lost-property-office')?.fate).toBe('dropped');
    expect(r.sent?.filter((s) => s.fate !== 'kept')).toHaveLength(1);
    expect(r.reply).toContain('Tannery Row'); // so the reply repeats the stale address
  });
});

describe('accessibility-and-service-changes.jsonl', () => {
  const recs = readRecords('accessibility-and-service-changes.jsonl');
  const position = (r: LogRecord, id: string): [number, number] => {
    const ps = r.segments.filter((s) => s.kind === 'passage');
    return [ps.findIndex((s) => s.id === id) + 1, ps.length];
  };
  const shared = (r: LogRecord, w: string): number =>
    new Set((r.segments.find((s) => s.kind === 'query')?.text.toLowerCase().match(/[a-z0-9]+/g) ?? []).filter((x) => x.length > 3)).has(w) ? 1 : 0;

  it('sends every turn 6–8 passages in one shared chat message', () => {
    for (const r of recs) {
      const ps = r.segments.filter((s) => s.kind === 'passage');
      expect(ps.length).toBeGreaterThanOrEqual(6);
      expect(new Set(ps.map((p) => p.message))).toEqual(new Set([1]));
    }
  });

  it('turn 1: the evidence is the only passage naming the lift outage, yet it is ranked 6 of 7', () => {
    const r = turnOf(recs, 1);
    expect(position(r, 'svc-wrenfield-lift-outage')).toEqual([6, 7]);
    expect(shared(r, 'lift') + shared(r, 'wrenfield') + shared(r, 'platform')).toBe(3);
    const ps = r.segments.filter((s) => s.kind === 'passage');
    const withAll = ps.filter((p) => /out of service/.test(p.text) && /Wrenfield/.test(p.text) && /platform 2/.test(p.text));
    expect(withAll.map((p) => p.id)).toEqual(['svc-wrenfield-lift-outage']);
  });

  it('turns 2 and 4: the evidence sits in the middle third of the passage block', () => {
    // Middle third of n positions: n/3 < position ≤ 2n/3. 7 passages: 2.33 < 4 ≤ 4.67; 8 passages: 2.67 < 5 ≤ 5.33.
    expect(position(turnOf(recs, 2), 'svc-wrenfield-lift-outage')).toEqual([4, 7]);
    expect(position(turnOf(recs, 4), 'svc-route12-orchard-hill-roadworks')).toEqual([5, 8]);
    expect(turnOf(recs, 4).evidence).toEqual(['svc-route12-orchard-hill-roadworks']);
  });

  it('fits its 3584-token budget on every turn (the story here is ranking, not room)', () => {
    for (const r of recs) {
      // One shared passage message: 3 + 1 + the joined passage texts; the other messages text + 4 each.
      const ps = r.segments.filter((s) => s.kind === 'passage');
      const others = r.segments.filter((s) => s.kind !== 'passage');
      const total = 3 + others.reduce((s, x) => s + tokens(r, x.text) + 4, 0) + 4 + tokens(r, ps.map((p) => p.text).join('\n\n'));
      expect(total).toBeLessThanOrEqual(r.model.window - r.model.reserve);
    }
  });
});

describe('hostile-payloads.jsonl', () => {
  const raw = readFileSync(`${DIR}/hostile-payloads.jsonl`, 'utf8');
  const recs = readRecords('hostile-payloads.jsonl');
  const texts = recs.flatMap((r) => [...r.segments.flatMap((s) => [s.text, s.id, s.source ?? '']), r.reply ?? '']).join('\n');

  it('carries every payload the renderer must show as text', () => {
    expect(recs).toHaveLength(3);
    for (const payload of [
      '<script>window.__spillwayPwned=1</script>',
      '<img src=x onerror="window.__spillwayPwned=1">',
      '<iframe src="https://example.invalid/">',
      'href="javascript:window.__spillwayPwned=1"',
      '</style><script>',
      '<!--',
      '\u202E',
      '"><svg onload=window.__spillwayPwned=1>',
    ])
      expect(texts).toContain(payload);
    expect(recs[0]?.segments.find((s) => s.kind === 'passage' && s.source?.startsWith('javascript:'))).toBeUndefined();
    expect(recs[2]?.segments.some((s) => s.source === 'javascript:window.__spillwayPwned=1')).toBe(true);
  });

  it('has a passage that is one very long line of minified JSON, clipped by the budget', () => {
    const r = recs[0] as LogRecord;
    const blob = seg(r, 'partner-stops-feed').text;
    expect(blob.length).toBeGreaterThan(5000);
    expect(blob).not.toContain('\n');
    expect(() => JSON.parse(blob)).not.toThrow();
    // fixed 3 + 279 + (12+4) = 298; ranks 1–2 cost 84 + 108 → 490; room 3584 − 490 = 3094 < 3502 + 4.
    expect(t(r, 'partner-stops-feed')).toBe(3502);
    expect(3 + t(r, 'instructions') + 4 + t(r, 'query') + 4 + t(r, 'forum-day-rover-tips') + 4 + t(r, 'partner-otterbank-events') + 4).toBe(490);
    expect(raw.split('\n').filter(Boolean).every((l) => l.startsWith('{"v":1'))).toBe(true);
  });
});
