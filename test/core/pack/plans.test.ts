import { beforeAll, describe, expect, it } from 'vitest';
import { Accountant } from '../../../extension/core/tokens/accountant';
import { repackRecord } from '../../../extension/core/repack/pack';
import { parsePlan, PlanError, knownPlans } from '../../../extension/core/pack/plans';
import { buildLedger } from '../../../extension/core/audit/ledger';
import { charsOfWords, fatesOf, record1, words, WORD } from '../../fixtures/repack/records';
import { refCount } from '../../support/reference';
import type { LogRecord } from '../../../extension/core/log/types';

let acct: Accountant;
beforeAll(async () => {
  acct = await Accountant.create();
  await acct.encoder('cl100k_base');
}, 60_000);

const pack = (record: LogRecord, budget: number, plan: string) => repackRecord(record, { budget, plan }, acct);

describe('the hand-worked record', () => {
  it('has the token counts the arithmetic below assumes (reference encoder: tiktoken cl100k_base)', () => {
    const r = record1();
    const expected: Record<string, number> = { sys: 10, 'h1-u': 20, 'h1-a': 20, 'h2-u': 15, 'h2-a': 15, q: 5, p1: 60, p2: 50, p3: 40 };
    for (const s of r.segments) expect(refCount('cl100k_base', s.text), s.id).toBe(expected[s.id]);
    // Prefixes of k words are k tokens too (the clip arithmetic relies on it).
    expect(refCount('cl100k_base', words(40, WORD.p2))).toBe(40);
    expect(refCount('cl100k_base', words(30, WORD.p1))).toBe(30);
  });
});

describe('recent-first (the core plan) on R1', () => {
  it('budget 150: 15 mandatory + 30 (turn 2) + 40 (turn 1) = 85; p1 → 145; p2 would be 195 and only 5 tokens of room (< 32) → dropped', () => {
    const out = pack(record1(), 150, 'recent-first');
    expect(fatesOf(out.record)).toMatchObject({ 'h1-u': 'kept', 'h2-u': 'kept', p1: 'kept', p2: 'dropped', p3: 'dropped' });
    expect(out.used).toBe(145);
  });
});

describe('evidence-first', () => {
  it('budget 150: 15 + p1 60 + p2 50 = 125; p3 → 165 > 150, 25 of room < 32 → dropped; history turn 2 → 155 > 150 → no history', () => {
    const out = pack(record1(), 150, 'evidence-first');
    expect(fatesOf(out.record)).toMatchObject({ p1: 'kept', p2: 'kept', p3: 'dropped', 'h2-u': 'dropped', 'h2-a': 'dropped', 'h1-u': 'dropped' });
    expect(out.used).toBe(125);
  });
  it('budget 200: 15 + 150 = 165; turn 2 → 195 ≤ 200 kept; turn 1 → 235 > 200 → stops', () => {
    const out = pack(record1(), 200, 'evidence-first');
    expect(fatesOf(out.record)).toMatchObject({ p3: 'kept', 'h2-u': 'kept', 'h2-a': 'kept', 'h1-u': 'dropped', 'h1-a': 'dropped' });
    expect(out.used).toBe(195);
  });
});

describe('split:P', () => {
  it('split:80, budget 185: room 170, passages 136, history 34 → history limit 49: turn 2 (→45) yes, turn 1 (→85) no; passages p1 → 105, p2 → 155, p3 → 195 > 185 with 30 of room < 32 → dropped; turn 1 again → 195 > 185 → no', () => {
    const out = pack(record1(), 185, 'split:80');
    expect(fatesOf(out.record)).toMatchObject({ 'h2-u': 'kept', 'h1-u': 'dropped', p1: 'kept', p2: 'kept', p3: 'dropped' });
    expect(out.used).toBe(155);
  });
  it('unused history room flows to passages — split:20, budget 185: history share 136 but history takes 70 (→85); passages p1 → 145, p2 clipped to the 40 tokens left', () => {
    const out = pack(record1(), 185, 'split:20');
    // p2 keeps its first 40 words: 40 × 5 − 1 = 199 characters ("blue " is 5).
    expect(fatesOf(out.record)).toMatchObject({ 'h1-u': 'kept', 'h2-u': 'kept', p1: 'kept', p2: `clipped@${charsOfWords(40, WORD.p2)}`, p3: 'dropped' });
    expect(charsOfWords(40, WORD.p2)).toBe(199);
    expect(out.used).toBe(185);
  });
  it('unused passage room flows to history — split:80, budget 240: room 225, history share 45 (limit 60): turn 2 → 45 yes, turn 1 → 85 no; all passages → 195; then turn 1 → 235 ≤ 240 yes', () => {
    const out = pack(record1(), 240, 'split:80');
    expect(fatesOf(out.record)).toMatchObject({ 'h1-u': 'kept', 'h1-a': 'kept', 'h2-u': 'kept', p1: 'kept', p2: 'kept', p3: 'kept' });
    expect(out.used).toBe(235);
  });
});

describe('modifiers', () => {
  it('cap:30, budget 185: every passage cut to 30 tokens first: 85 + 30 + 30 + 30 = 175 ≤ 185, all three sent clipped (plain recent-first sends p1 whole, p2 40 tokens, drops p3)', () => {
    const out = pack(record1(), 185, 'recent-first+cap:30');
    expect(fatesOf(out.record)).toMatchObject({ p1: `clipped@${charsOfWords(30, WORD.p1)}`, p2: `clipped@${charsOfWords(30, WORD.p2)}`, p3: `clipped@${charsOfWords(30, WORD.p3)}` });
    expect(out.used).toBe(175);
    const plain = pack(record1(), 185, 'recent-first');
    expect(fatesOf(plain.record)).toMatchObject({ p1: 'kept', p2: `clipped@${charsOfWords(40, WORD.p2)}`, p3: 'dropped' });
  });

  it('top:1 leaves out every passage but the best-ranked, with the reason written', () => {
    const out = pack(record1(), 1000, 'recent-first+top:1');
    expect(fatesOf(out.record)).toMatchObject({ p1: 'kept', p2: 'dropped', p3: 'dropped' });
    expect(out.record.sent!.find((s) => s.id === 'p2')!.reason).toBe('top');
  });

  it('dedupe:R with 3-word shingles, worked by hand', () => {
    // X = "alpha beta gamma delta epsilon": {alpha beta gamma, beta gamma delta, gamma delta epsilon}
    // Y = "alpha beta gamma delta zeta":    {alpha beta gamma, beta gamma delta, gamma delta zeta}
    // ∩ = 2, ∪ = 4 → r = 0.5. Z shares no shingle with either.
    const r = record1({
      segments: [
        { id: 'q', kind: 'query', role: 'user', text: 'fares' },
        { id: 'x', kind: 'passage', role: 'user', rank: 1, text: 'alpha beta gamma delta epsilon' },
        { id: 'y', kind: 'passage', role: 'user', rank: 2, text: 'alpha beta gamma delta zeta' },
        { id: 'z', kind: 'passage', role: 'user', rank: 3, text: 'one two three four' },
      ],
    });
    expect(fatesOf(pack(r, 1000, 'recent-first+dedupe:0.5').record)).toMatchObject({ x: 'kept', y: 'dropped', z: 'kept' });
    expect(fatesOf(pack(r, 1000, 'recent-first+dedupe:0.51').record)).toMatchObject({ x: 'kept', y: 'kept', z: 'kept' });
    expect(pack(r, 1000, 'recent-first+dedupe:0.5').record.sent!.find((s) => s.id === 'y')!.reason).toBe('duplicate');
  });

  it("dedupe on Broder's published pair: r₃ = 3/7 = 42.85% (SEQUENCES 1997, Option B) → dropped at 0.42, kept at 0.43", () => {
    const r = record1({
      segments: [
        { id: 'q', kind: 'query', role: 'user', text: 'roses' },
        { id: 'a', kind: 'passage', role: 'user', rank: 1, text: 'a rose is a rose is a rose' },
        { id: 'b', kind: 'passage', role: 'user', rank: 2, text: 'a rose is a flower which is a rose' },
      ],
    });
    expect(fatesOf(pack(r, 1000, 'recent-first+dedupe:0.42').record)).toMatchObject({ a: 'kept', b: 'dropped' });
    expect(fatesOf(pack(r, 1000, 'recent-first+dedupe:0.43').record)).toMatchObject({ a: 'kept', b: 'kept' });
  });

  it('order:edges puts ranks 1, 3, 5 at the front and 4, 2 at the back (Liu et al., TACL 2024)', () => {
    const r = record1({
      segments: [
        { id: 'q', kind: 'query', role: 'user', text: 'fares' },
        ...[1, 2, 3, 4, 5].map((k) => ({ id: `p${k}`, kind: 'passage' as const, role: 'user' as const, rank: k, text: `passage ${k}` })),
      ],
    });
    const out = pack(r, 1000, 'recent-first+order:edges');
    expect(out.record.segments.map((s) => s.id)).toEqual(['q', 'p1', 'p3', 'p5', 'p4', 'p2']);
    expect(out.record.plan).toBe('recent-first+order:edges');
    // Idempotent: re-packing the arranged record gives the same order.
    expect(pack(out.record, 1000, 'recent-first+order:edges').record.segments.map((s) => s.id)).toEqual(['q', 'p1', 'p3', 'p5', 'p4', 'p2']);
  });

  it('cut:sentence moves a cap back to the last sentence end before it', () => {
    const text = 'Alpha beta gamma. Delta epsilon zeta. Eta theta iota.';
    // The cap of 6 tokens ends inside the second sentence (reference counts below), so the cut
    // moves back to the end of "Alpha beta gamma." = 17 characters.
    expect(refCount('cl100k_base', 'Alpha beta gamma.')).toBeLessThanOrEqual(6);
    expect(refCount('cl100k_base', 'Alpha beta gamma. Delta epsilon zeta.')).toBeGreaterThan(6);
    const r = record1({ segments: [{ id: 'q', kind: 'query', role: 'user', text: 'x' }, { id: 'p', kind: 'passage', role: 'user', rank: 1, text }] });
    expect(fatesOf(pack(r, 1000, 'recent-first+cap:6').record).p).not.toBe('clipped@17');
    expect(fatesOf(pack(r, 1000, 'recent-first+cap:6+cut:sentence').record).p).toBe('clipped@17');
  });

  it('cut:sentence moves a clip back to the last sentence end that fits', () => {
    // Sentence 1 = "red" × 40 + "." = 40·4 − 1 + 1 = 160 characters; sentence 2 = "Blue" + "blue" × 39 + "."
    // (capitalised: Unicode sentence rules (UAX #29, SB8) do not break before a lower-case word).
    const s1 = words(40, WORD.p1) + '.';
    const text = `${s1} Blue ${words(39, WORD.p2)}.`;
    const q = 'owl';
    const budget = refCount('cl100k_base', q) + 60;
    // The clip keeps 60 tokens, which ends inside sentence 2 (reference counts), so the cut moves back to 160.
    expect(s1.length).toBe(160);
    expect(refCount('cl100k_base', s1)).toBeGreaterThanOrEqual(32);
    expect(refCount('cl100k_base', s1)).toBeLessThan(60);
    const r = record1({ segments: [{ id: 'q', kind: 'query', role: 'user', text: q }, { id: 'p', kind: 'passage', role: 'user', rank: 1, text }] });
    const plain = fatesOf(pack(r, budget, 'recent-first+top:1').record).p!;
    expect(plain).toMatch(/^clipped@/);
    expect(Number(plain.split('@')[1])).toBeGreaterThan(160);
    expect(fatesOf(pack(r, budget, 'recent-first+cut:sentence').record).p).toBe('clipped@160');
  });

  it('modifier order does not matter; the canonical name has a fixed order', () => {
    expect(parsePlan('recent-first+order:edges+cap:200+dedupe:0.8').name).toBe('recent-first+dedupe:0.8+cap:200+order:edges');
  });
});

describe('best-value', () => {
  it('budget 185: room after instructions, query and history = 100; {p1, p3} = 100 tokens, relevance 0.9 + 0.75 = 1.65 beats {p2, p3} = 1.55 and {p1} = 0.9 ({p1, p2} = 110 does not fit)', () => {
    const out = pack(record1(), 185, 'best-value');
    expect(fatesOf(out.record)).toMatchObject({ p1: 'kept', p2: 'dropped', p3: 'kept', 'h1-u': 'kept', 'h2-u': 'kept' });
    expect(out.used).toBe(185);
  });
  it('without retriever scores it uses BM25+ against the query: a passage sharing no query term scores 0 and is never chosen', () => {
    const r = record1({
      segments: [
        { id: 'q', kind: 'query', role: 'user', text: 'night bus fare' },
        { id: 'museum', kind: 'passage', role: 'user', rank: 1, text: 'The museum opens at ten.' },
        { id: 'fare', kind: 'passage', role: 'user', rank: 2, text: 'The night bus fare is two pounds.' },
      ],
    });
    expect(fatesOf(pack(r, 1000, 'best-value').record)).toMatchObject({ museum: 'dropped', fare: 'kept' });
  });
});

describe('fusion:L', () => {
  it('fusion:100, budget 1000: windows p1 15+60 = 75 (turn 2 → 105 > 100); p2 15+50+30 = 95; p3 15+40+30 = 85 (turn 1 → 125 > 100); 255 in all', () => {
    const out = pack(record1(), 1000, 'fusion:100');
    expect(out.windows!.map((w) => [w.passage, w.used])).toEqual([['p1', 75], ['p2', 95], ['p3', 85]]);
    expect(out.used).toBe(255);
    expect((out.record.fusion as { window: number }).window).toBe(100);
    // Across windows: turn 2 was in a window, turn 1 in none.
    expect(fatesOf(out.record)).toMatchObject({ p1: 'kept', p2: 'kept', p3: 'kept', 'h2-u': 'kept', 'h1-u': 'dropped' });
  });
  it('fusion:100, budget 200: windows p1 (75) and p2 (95) = 170; p3 would make 255 > 200 → no window', () => {
    const out = pack(record1(), 200, 'fusion:100');
    expect(out.windows!.map((w) => w.passage)).toEqual(['p1', 'p2']);
    expect(out.record.sent!.find((s) => s.id === 'p3')).toMatchObject({ fate: 'dropped', reason: 'no-window' });
  });
  it('fusion:70: p1 is clipped inside its window to 70 − 15 = 55 tokens', () => {
    const out = pack(record1(), 1000, 'fusion:70');
    expect(out.windows![0]).toMatchObject({ passage: 'p1', used: 70 });
    expect(out.windows![0]!.sent.find((s) => s.id === 'p1')).toMatchObject({ fate: 'clipped', chars: charsOfWords(55, WORD.p1) });
  });
});

describe('bad input', () => {
  it('a budget below instructions + query is a per-turn state, for every plan', () => {
    for (const plan of ['recent-first', 'evidence-first', 'split:50', 'best-value', 'fusion:100', 'recent-first+cap:10+dedupe:0.5+order:edges+cut:sentence']) {
      const out = pack(record1(), 10, plan);
      expect(out.state, plan).toBe('over-before-passages');
      expect(out.record.sent!.filter((s) => s.fate !== 'dropped').every((s) => s.id === 'sys' || s.id === 'q'), plan).toBe(true);
    }
  });
  it('unknown plans are refused with the list of valid ones', () => {
    for (const bad of ['nope', 'split:101', 'split:', 'recent-first+cap:0', 'recent-first+cap:5+cap:6', 'best-value+order:middle', 'fusion:0', 'recent-first+dedupe:1.5']) {
      expect(() => parsePlan(bad), bad).toThrow(PlanError);
    }
    expect(() => parsePlan('nope')).toThrow(/valid: recent-first, evidence-first/);
    expect(knownPlans().length).toBe(2);
  });
});

describe('composed recent-first agrees with the core recent-first', () => {
  it('recent-first+top:99 gives the same fates as recent-first at every budget from 0 to 240', () => {
    for (let b = 0; b <= 240; b += 5) {
      const core = buildLedger({ line: 1, offset: 0, record: record1() }, { budget: b, plan: 'recent-first' }, acct);
      const mine = pack(record1(), b, 'recent-first+top:99');
      expect(mine.fates, `budget ${b}`).toEqual(core.segments.map((s) => s.fate));
    }
  });
});
