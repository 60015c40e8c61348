import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { Accountant } from '../../extension/core/tokens/accountant';
import { readLogForRepack, repackLines, ComparisonTotalsBuilder, worseFirst, type TurnComparison } from '../../extension/core/repack/index';
import { ComparisonCollector, comparisonTurnView, describeRepack, MAX_COMPARISON_PAGE, RepackTracker, segmentDiff, toComparisonRow, utf8Length } from '../../extension/core/view/comparison';
import type { SegmentView, TurnDetail } from '../../extension/protocol/messages';
import { turnComparison } from './repackFixtures';

const SAMPLE = 'sample-workspace/logs/fares-and-passes.jsonl';

async function repackSample(budget: number, max?: number) {
  const bytes = readFileSync(SAMPLE);
  const collector = new ComparisonCollector(new ComparisonTotalsBuilder(), max);
  const tracker = new RepackTracker(collector);
  const all: TurnComparison[] = [];
  let out = '';
  const summary = await repackLines(tracker.items(readLogForRepack([new Uint8Array(bytes)])), { budget }, {
    accountant: await Accountant.create(),
    write: (line) => {
      tracker.wrote(line);
      out += line;
    },
    onComparison: (c) => {
      all.push(c);
      tracker.onComparison(c);
    },
  });
  return { src: bytes, out: Buffer.from(out, 'utf8'), store: collector.finish(), all, summary };
}

const lineAt = (buf: Buffer, offset: number): string => {
  const nl = buf.indexOf(10, offset);
  return buf.subarray(offset, nl < 0 ? buf.length : nl).toString('utf8');
};

describe('re-pack comparison store on a sample log (budget 512)', () => {
  it('locates both records of every row: source offset/line and re-packed offset/line point at the same turn', async () => {
    const { src, out, store } = await repackSample(512);
    expect(store.rows).toHaveLength(6);
    const outLines = out.toString('utf8').split('\n');
    for (const { row, loc } of store.rows) {
      const a = JSON.parse(lineAt(src, loc.offsetA));
      const b = JSON.parse(lineAt(out, loc.offsetB));
      expect([a.conversation, a.turn]).toEqual([row.conversation, row.turn]);
      expect([b.conversation, b.turn]).toEqual([row.conversation, row.turn]);
      // the line number counted while writing is the line's position in the written file
      expect(JSON.parse(outLines[row.lineB - 1]!).turn).toBe(row.turn);
      // the re-packed record carries the new budget: window − reserve = 512
      expect(b.model.window - b.model.reserve).toBe(512);
      // the source line number: 1-based position in the source file
      expect(JSON.parse(src.toString('utf8').split('\n')[row.line - 1]!).turn).toBe(row.turn);
    }
  });

  it('lists worse turns in the core’s worseFirst order, with totals over every turn', async () => {
    const { store, all } = await repackSample(512);
    const expected = all.filter((c) => c.worse).sort(worseFirst).map((c) => c.line);
    expect(store.rows.filter((r) => r.row.verdict === 'worse').map((r) => r.row.line)).toEqual(expected);
    expect(store.totals.turns).toBe(6);
    expect(store.omitted).toBe(0);
    // `spillway repack sample-workspace/logs/fares-and-passes.jsonl --budget 512` printed
    // "turns compared: 6 (changed 6, worse 6, better 0)" (docs/repack-in-editor.md).
    expect([store.totals.changed, store.totals.worse, store.totals.better]).toEqual([6, 6, 0]);
  });

  it('keeps at most `max` rows, worse ones first, and counts the rest as omitted', async () => {
    const { store } = await repackSample(512, 2);
    expect(store.rows).toHaveLength(2);
    expect(store.omitted).toBe(4);
    expect(store.totals.turns).toBe(6);
  });

  it('reproduces nothing worse when re-packed with a budget every turn already fits', async () => {
    // 1,024 tokens: the log's own budget (window 2,048 − reserve 1,024) on every record.
    const { store } = await repackSample(1024);
    expect(store.totals.worse).toBe(0);
    expect(store.rows.every((r) => r.row.verdict === 'same')).toBe(true);
  });
});

describe('ComparisonCollector on hand-made turns', () => {
  it('bounds memory: 10 turns into 3 rows keeps both worse turns, then the changed one with most passages lost', () => {
    const builder = { n: 0, add() { this.n++; }, result() { return { turns: this.n } as never; } };
    const c = new ComparisonCollector(builder, 3);
    let line = 1;
    const add = (over: Partial<TurnComparison>): void => c.add(turnComparison({ line, ...over }), line++, { offsetA: 0, offsetB: 0 });
    for (let i = 0; i < 5; i++) add({ worse: false, changed: false, lost: [] }); // lines 1–5 same
    add({ worse: true, evidence: null, replySupport: { a: 0.5, b: 0.4 } }); // line 6: support −0.1
    add({ worse: false, changed: true, lost: ['x'] }); // line 7
    add({ worse: true }); // line 8: evidence 1 → 0
    add({ worse: false, changed: true, lost: ['x', 'y', 'z'] }); // line 9
    add({ worse: false, changed: true, lost: [] }); // line 10
    const store = c.finish();
    expect(store.rows.map((r) => [r.row.line, r.row.verdict])).toEqual([
      [8, 'worse'],
      [6, 'worse'],
      [9, 'changed'],
    ]);
    expect(store.omitted).toBe(7);
    expect((store.totals as unknown as { turns: number }).turns).toBe(10);
    expect(store.at(9)?.row.lostCount).toBe(3);
    expect(store.at(1)).toBeUndefined();
  });

  it('pages with clamped offsets and limits', () => {
    const c = new ComparisonCollector({ add() {}, result: () => ({}) as never });
    for (let l = 1; l <= 700; l++) c.add(turnComparison({ line: l, worse: false, changed: false, lost: [] }), l, { offsetA: 0, offsetB: 0 });
    const store = c.finish();
    expect(store.page(-5, 10_000)).toMatchObject({ offset: 0, total: 700 });
    expect(store.page(-5, 10_000).rows).toHaveLength(MAX_COMPARISON_PAGE);
    expect(store.page(695, 10).rows.map((r) => r.line)).toEqual([696, 697, 698, 699, 700]);
    expect(store.page(9999, 10)).toEqual({ offset: 700, total: 700, rows: [] });
  });

  it('rows list at most 8 passage ids but count them all', () => {
    const lost = Array.from({ length: 11 }, (_, i) => `p${i}`);
    const row = toComparisonRow(turnComparison({ lost }), 4);
    expect(row.lost).toEqual(lost.slice(0, 8));
    expect(row.lostCount).toBe(11);
    expect(row).toMatchObject({ lineB: 4, evidenceA: 1, evidenceB: 0, supportA: 0.8, supportB: 0.25, historyDropped: 1, verdict: 'worse' });
  });
});

const seg = (id: string, fate: SegmentView['fate'], kept: number, tokens = 100): SegmentView => ({ id, kind: 'passage', role: 'user', tokens, keptTokens: kept, share: 0, fate, text: `text of ${id}` });

describe('side-by-side view', () => {
  it('marks each segment from its own side', () => {
    expect(segmentDiff('a', seg('p', 'kept', 100), seg('p', 'dropped', 0))).toBe('lost');
    expect(segmentDiff('b', seg('p', 'dropped', 0), seg('p', 'kept', 100))).toBe('lost');
    expect(segmentDiff('a', seg('p', 'dropped', 0), seg('p', 'clipped', 40))).toBe('gained');
    expect(segmentDiff('a', seg('p', 'kept', 100), seg('p', 'clipped', 40))).toBe('cut-more');
    expect(segmentDiff('a', seg('p', 'clipped', 40), seg('p', 'kept', 100))).toBe('cut-less');
    expect(segmentDiff('a', seg('p', 'clipped', 40), seg('p', 'clipped', 40))).toBe('same');
    expect(segmentDiff('a', seg('p', 'kept', 100), undefined)).toBe('only-a');
    expect(segmentDiff('b', seg('p', 'kept', 100), undefined)).toBe('only-b');
  });

  it('builds both sides with previews cut at 240 characters', () => {
    const long = { ...seg('p1', 'kept', 100), text: 'x'.repeat(300) };
    const row = { line: 2, conversation: 'c', turn: 1, used: 900, budget: 1024, window: 2048, reserve: 1024, state: 'ok' as const, byKind: { instructions: 0, history: 0, query: 0, passage: 0, tool: 0 }, framing: 0, joins: 0, clipped: 0, dropped: 0 };
    const detail = (segments: SegmentView[], budget: number): TurnDetail => ({ row: { ...row, budget, window: budget + 1024 }, model: 'm', encoding: 'o200k_base', framingProfile: 'chat', plan: 'recent-first', fatesFrom: 'sent', free: 0, over: 0, spill: 0, notes: [], segments });
    const v = comparisonTurnView(3, toComparisonRow(turnComparison({ line: 2 }), 2), detail([long, seg('p2', 'kept', 100)], 1024), detail([{ ...long, fate: 'dropped', keptTokens: 0 }, seg('p2', 'clipped', 30)], 512));
    expect(v.generation).toBe(3);
    expect(v.a.segments.map((s) => s.diff)).toEqual(['lost', 'cut-more']);
    expect(v.b.segments.map((s) => s.diff)).toEqual(['lost', 'cut-more']);
    expect(v.a.segments[0]!.preview).toBe(`${'x'.repeat(240)}…`);
    expect([v.a.budget, v.b.budget, v.b.window]).toEqual([1024, 512, 1536]);
  });

  it('describes the options', () => {
    expect(describeRepack({ budget: 4096 })).toBe('budget 4,096 · each record’s own plan · encoding kept');
    expect(describeRepack({ budget: 512, plan: 'split:60', encoding: 'cl100k_base' })).toBe('budget 512 · plan split:60 · encoding cl100k_base');
  });
});

describe('utf8Length', () => {
  it('agrees with Node’s Buffer.byteLength (the reference) on ASCII, 2-, 3- and 4-byte characters and lone surrogates', () => {
    for (const s of ['', 'abc', 'é', '€ fare', '東京', '🚌 bus 🚋', '\ud800x', 'x\udc00', '{"t":"a\\nb"}\n']) expect(utf8Length(s)).toBe(Buffer.byteLength(s, 'utf8'));
  });
});
