import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { auditText } from '../../../extension/core/audit/audit';
import type { Ledger } from '../../../extension/core/audit/types';
import { JOINER } from '../../../extension/core/log/types';
import { ref, refChatTokens, refCount } from '../../support/reference';

/** n words "ok" separated by spaces: "ok" and " ok" are one token each in cl100k_base (checked below). */
const W = (n: number): string => Array(n).fill('ok').join(' ');

interface Seg {
  id: string;
  kind: string;
  role: string;
  text: string;
  turn?: number;
  rank?: number;
  message?: number;
}

function rec(segments: Seg[], window: number, extra: Record<string, unknown> = {}): string {
  return JSON.stringify({ v: 1, conversation: 'c', turn: 3, model: { name: 'gpt-4', encoding: 'cl100k_base', window, reserve: 0 }, framing: 'chat', segments, ...extra });
}

async function ledger(line: string): Promise<Ledger> {
  const r = await auditText(line, {});
  expect(r.errors).toEqual([]);
  return r.records[0]!;
}
const fate = (l: Ledger, id: string) => l.segments.find((s) => s.id === id)!;

// Each segment is its own chat message: cost = 3 (per message) + 1 (role) + its tokens.
const base = (p1: number, p2: number, t2user = 20): Seg[] => [
  { id: 'sys', kind: 'instructions', role: 'system', text: W(10) }, // 3+1+10 = 14
  { id: 'h1u', kind: 'history', role: 'user', turn: 1, text: W(20) }, // 24
  { id: 'h1a', kind: 'history', role: 'assistant', turn: 1, text: W(20) }, // 24 → turn 1 = 48
  { id: 'h2u', kind: 'history', role: 'user', turn: 2, text: W(t2user) }, // 4 + t2user
  { id: 'h2a', kind: 'history', role: 'assistant', turn: 2, text: W(20) }, // 24
  { id: 'p1', kind: 'passage', role: 'system', rank: 1, text: W(p1) }, // 4 + p1
  { id: 'p2', kind: 'passage', role: 'system', rank: 2, text: W(p2) }, // 4 + p2
  { id: 'q', kind: 'query', role: 'user', text: W(10) }, // 14
];
// Mandatory = sys 14 + q 14 + priming 3 = 31.

describe('recent-first packing, worked by hand', () => {
  it('the word unit is one token per word (precondition, reference encoder)', () => {
    expect(refCount('cl100k_base', W(40))).toBe(40);
    expect(['system', 'user', 'assistant'].map((r) => refCount('cl100k_base', r))).toEqual([1, 1, 1]);
  });

  it('keeps history newest first and clips the first passage that does not fit', async () => {
    const l = await ledger(rec(base(100, 5), 200));
    // 31 + turn 2 (48) = 79 ≤ 200; + turn 1 (48) = 127 ≤ 200; + p1 (104) = 231 > 200 → clip.
    // room = 200 − 127 = 73; the new message costs 4 → 69 tokens of p1 kept (≥ 32).
    expect(fate(l, 'p1')).toMatchObject({ fate: 'clipped', tokens: 100, keptTokens: 69, cut: { token: 69, char: 2 + 3 * 68 } });
    // p2 would fit on its own (9 tokens) but every passage after the clipped one is dropped.
    expect(fate(l, 'p2').fate).toBe('dropped');
    expect(l.used).toBe(200);
    expect(l.free).toBe(0);
    expect(l.spill).toBe(31 + 5);
    expect(l.byKind).toEqual({ instructions: 10, history: 80, query: 10, passage: 69, tool: 0 });
    // framing: 7 messages sent × (3 + 1) + 3 priming = 31; joins 0 (one segment per message).
    expect(l.framing).toBe(31);
    expect(l.joins).toBe(0);
    expect(l.rank1Fate).toBe('clipped');
    expect(l.state).toBe('ok');
  });

  it('drops a passage when fewer than 32 of its tokens would fit, and all passages after it', async () => {
    // Budget 150: 127 after history; room 23 − 4 = 19 < 32 → p1 dropped; p2 (9) would fit but is dropped.
    const l = await ledger(rec(base(100, 5), 150));
    expect(fate(l, 'p1').fate).toBe('dropped');
    expect(fate(l, 'p2').fate).toBe('dropped');
    expect(l.used).toBe(127);
    expect(l.free).toBe(23);
    expect(l.rank1Fate).toBe('dropped');
  });

  it('stops at the first history turn that does not fit, even if an older one would', async () => {
    // Turn 2 = (4 + 60) + 24 = 88: 31 + 88 = 119 > 100 → stop; turn 1 (48 → 79) is not tried.
    const l = await ledger(rec(base(100, 5, 60), 100));
    expect(['h1u', 'h1a', 'h2u', 'h2a'].map((id) => fate(l, id).fate)).toEqual(['dropped', 'dropped', 'dropped', 'dropped']);
    // p1: room 100 − 31 − 4 = 65 ≥ 32 → clipped at 65 tokens.
    expect(fate(l, 'p1')).toMatchObject({ fate: 'clipped', keptTokens: 65 });
    expect(l.used).toBe(100);
  });

  it('flags a turn whose instructions and query alone exceed the budget', async () => {
    const l = await ledger(rec(base(100, 5), 30));
    // Mandatory 31 > 30: everything else dropped, over by 1.
    expect(l.state).toBe('over-before-passages');
    expect(l.used).toBe(31);
    expect(l.over).toBe(1);
    expect(l.segments.filter((s) => s.fate === 'dropped').map((s) => s.id)).toEqual(['h1u', 'h1a', 'h2u', 'h2a', 'p1', 'p2']);
  });

  it('shows the tokens of joining segments that share a message as their own line', async () => {
    const segs: Seg[] = [
      { id: 'sys', kind: 'instructions', role: 'system', text: W(10) },
      { id: 'p1', kind: 'passage', role: 'system', rank: 1, text: W(10), message: 7 },
      { id: 'p2', kind: 'passage', role: 'system', rank: 2, text: W(10), message: 7 },
      { id: 'q', kind: 'query', role: 'user', text: W(10) },
    ];
    const l = await ledger(rec(segs, 1000));
    // "ok … ok\n\nok … ok" = 10 + 1 ("\n\n") + 10 tokens (reference encoder below).
    expect(refCount('cl100k_base', W(10) + JOINER + W(10))).toBe(21);
    expect(l.joins).toBe(1);
    // 3 messages × 4 + 3 = 15 framing; 30 + 1 + 10 content.
    expect(l.framing).toBe(15);
    expect(l.used).toBe(15 + 10 + 21 + 10);
  });

  it('uses what the record says was sent, and reports where the plan differs', async () => {
    const line = rec(base(10, 5), 1000, {
      sent: [
        { id: 'sys', fate: 'kept' },
        { id: 'h2u', fate: 'kept' },
        { id: 'h2a', fate: 'kept' },
        { id: 'p1', fate: 'clipped', chars: 2 + 3 * 4 },
        { id: 'q', fate: 'kept' },
      ],
      usage: { prompt: 80 },
    });
    const l = await ledger(line);
    expect(l.fatesFrom).toBe('sent');
    expect(fate(l, 'h1u')).toMatchObject({ fate: 'dropped', planFate: 'kept' });
    // 5 words kept = "ok ok ok ok ok" → 5 tokens, cut after char 14.
    expect(fate(l, 'p1')).toMatchObject({ fate: 'clipped', keptTokens: 5, cut: { token: 5, char: 14 }, planFate: 'kept' });
    expect(fate(l, 'p2')).toMatchObject({ fate: 'dropped', planFate: 'kept' });
    // 14 + 24 + 24 + (4 + 5) + 14 + 3 = 88; usage says 80 → drift −8.
    expect(l.used).toBe(88);
    expect(l.usage).toEqual({ prompt: 80, drift: -8 });
    expect(l.notes.length).toBe(4);
  });

  it('a what-if budget ignores the sent list and packs by the plan', async () => {
    const line = rec(base(100, 5), 1000, { sent: [{ id: 'q', fate: 'kept' }] });
    const r = await auditText(line, { budget: 200 });
    expect(r.records[0]!.fatesFrom).toBe('plan');
    expect(r.records[0]!.used).toBe(200);
  });
});

describe('packing invariants against the reference encoder (property test)', () => {
  const pieces = ['ok', ' ', '漢字', '😀', '👩🏽‍💻', 'é', '\n', 'Harbourline', '€12.50', ',', 'ñ'];
  const textArb = fc.array(fc.constantFrom(...pieces), { minLength: 40, maxLength: 160 }).map((a) => a.join(''));

  it('used equals an independent recount of the sent prompt; cuts land on clean token boundaries', async () => {
    await fc.assert(
      fc.asyncProperty(textArb, textArb, fc.integer({ min: 20, max: 400 }), async (t1, t2, budget) => {
        const segs: Seg[] = [
          { id: 'sys', kind: 'instructions', role: 'system', text: 'Answer from the passages.' },
          { id: 'p1', kind: 'passage', role: 'system', rank: 1, text: t1 },
          { id: 'p2', kind: 'passage', role: 'system', rank: 2, text: t2 },
          { id: 'q', kind: 'query', role: 'user', text: 'Where is the lost property office?' },
        ];
        const r = await auditText(rec(segs, budget), {});
        const l = r.records[0]!;
        // Render what was sent and recount it with the reference encoder and the cookbook rule.
        const sent = segs
          .map((s, i) => ({ s, l: l.segments[i]! }))
          .filter(({ l }) => l.fate !== 'dropped')
          .map(({ s, l }) => ({ role: s.role, content: l.fate === 'clipped' ? s.text.slice(0, l.cut!.char) : s.text }));
        expect(l.used).toBe(refChatTokens('cl100k_base', sent));
        if (l.state === 'ok') expect(l.used).toBeLessThanOrEqual(budget);
        for (const [i, sl] of l.segments.entries()) {
          if (sl.fate !== 'clipped') continue;
          const text = segs[i]!.text;
          const ids = ref('cl100k_base').encode_ordinary(text);
          const prefix = new TextDecoder().decode(ref('cl100k_base').decode(ids.slice(0, sl.cut!.token)));
          expect(prefix).toBe(text.slice(0, sl.cut!.char));
          expect(sl.cut!.token).toBeGreaterThanOrEqual(32);
          expect(sl.keptTokens).toBe(refCount('cl100k_base', text.slice(0, sl.cut!.char)));
        }
      }),
      { numRuns: 60 },
    );
    // 60 audits with reference recounts: seconds alone, minutes on a machine shared with other jobs.
  }, 300_000);
});
