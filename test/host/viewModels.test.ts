import { describe, expect, it } from 'vitest';
import { buildOverview, conversationRows, MAX_PAGE, toTurnDetail, toTurnRow, turnPage } from '../../extension/core/view/viewModels';
import { findProblemTurn, ALL_CHECKS, rank1Passage, lostEvidence } from '../../extension/core/view/problems';
import { indexOfLine, recordAtLine, firstAfter, spillwayRecordAt } from '../../extension/core/view/audited';
import { audited, ledger, record, seg } from './ledgerFixture';

describe('toTurnRow / toTurnDetail', () => {
  const l = ledger({
    line: 4,
    rank1Fate: 'clipped',
    segments: [
      seg({ id: 'i', kind: 'instructions', tokens: 717, keptTokens: 717 }),
      seg({ id: 'p1', kind: 'passage', rank: 1, score: 0.9, fate: 'clipped', tokens: 400, keptTokens: 100, cut: { token: 100, char: 380 } }),
      seg({ id: 'p2', kind: 'passage', rank: 2, fate: 'dropped', tokens: 50, keptTokens: 0 }),
    ],
    usage: { prompt: 7034, drift: 0 },
  });
  const r = record({
    reply: 'Take the 14.',
    segments: [
      { id: 'i', kind: 'instructions', role: 'system', text: 'Be brief.' },
      { id: 'p1', kind: 'passage', role: 'user', text: 'Route 14 runs every 10 minutes.', source: 'kb/route-14', date: '2026-01-05' },
      { id: 'p2', kind: 'passage', role: 'user', text: 'Fares.' },
    ],
  });

  it('counts clipped and dropped passages on the row', () => {
    const row = toTurnRow(l);
    expect(row).toMatchObject({ line: 4, used: 7034, budget: 7168, clipped: 1, dropped: 1, rank1Fate: 'clipped', state: 'ok' });
  });

  it('carries texts, shares and cut points for one turn only', () => {
    const d = toTurnDetail({ ledger: l, record: r });
    expect(d.segments.map((s) => [s.id, s.text])).toEqual([
      ['i', 'Be brief.'],
      ['p1', 'Route 14 runs every 10 minutes.'],
      ['p2', 'Fares.'],
    ]);
    // 717 / 7,168 = 0.100027…
    expect(d.segments[0]!.share).toBeCloseTo(717 / 7168, 12);
    expect(d.segments[1]).toMatchObject({ cut: { token: 100, char: 380 }, source: 'kb/route-14', date: '2026-01-05', score: 0.9, rank: 1 });
    expect(d.reply).toBe('Take the 14.');
    expect(d.usage).toEqual({ prompt: 7034, drift: 0 });
  });
});

const log = {
  file: 'x.jsonl',
  records: [
    audited(1, { conversation: 'a', used: 3584 }), // 50%
    audited(2, { conversation: 'a', used: 7168, rank1Fate: 'clipped', spill: 40 }), // 100% → last bucket
    audited(4, { conversation: 'b', used: 9000, over: 1832, state: 'over-budget' }), // 125%
    audited(5, { conversation: 'b', used: 100, rank1Fate: 'dropped', spill: 10 }), // 1.4%
    audited(7, { conversation: 'a', used: 7167 }), // 99.99% → bucket 9
  ],
  issues: [{ line: 3, column: 1, code: 'bad-json', message: 'x' }],
};

describe('paging and conversations', () => {
  it('returns one page and clamps offset and limit', () => {
    expect(turnPage(log, 1, 2).rows.map((r) => r.line)).toEqual([2, 4]);
    expect(turnPage(log, 99, 10)).toEqual({ offset: 5, total: 5, rows: [] });
    expect(turnPage(log, -3, 1).rows.map((r) => r.line)).toEqual([1]);
    const big = { ...log, records: Array.from({ length: MAX_PAGE + 50 }, (_, i) => audited(i + 1)) };
    expect(turnPage(big, 0, 10_000).rows).toHaveLength(MAX_PAGE);
  });
  it('lists one conversation in line order', () => {
    expect(conversationRows(log, 'a').map((r) => r.line)).toEqual([1, 2, 7]);
    expect(conversationRows(log, 'zzz')).toEqual([]);
  });
});

describe('buildOverview', () => {
  const o = buildOverview(log);
  it('counts states and rank-1 fates', () => {
    expect(o).toMatchObject({ turns: 5, conversations: 2, overBudget: 1, overBeforePassages: 0, rank1Clipped: 1, rank1Dropped: 1, malformed: 1, spill: 50 });
  });
  it('buckets use of budget by tenths, the last bucket ≥ 100%', () => {
    // 1.4% → 0; 50% → 5; 99.99% → 9; 100% and 125% → 10.
    expect(o.useHistogram).toEqual([1, 0, 0, 0, 0, 1, 0, 0, 0, 1, 2]);
  });
  it('orders the worst turns: over budget, then rank-1 lost, then spill', () => {
    expect(o.worst.map((r) => r.line)).toEqual([4, 5, 2]);
  });
});

describe('record lookup and problem navigation', () => {
  it('finds records by line (binary search)', () => {
    expect(indexOfLine(log.records, 4)).toBe(2);
    expect(indexOfLine(log.records, 3)).toBe(-1);
    expect(recordAtLine(log, 7)?.ledger.used).toBe(7167);
    expect(firstAfter(log.records, 4)).toBe(3);
    expect(firstAfter(log.records, 0)).toBe(0);
    expect(firstAfter(log.records, 7)).toBe(5);
  });
  it('hovers find the record under a 0-based editor line, in Spillway-format logs only', () => {
    expect(spillwayRecordAt({ format: 'spillway', log }, 6)?.ledger.used).toBe(7167); // editor line 6 = log line 7
    expect(spillwayRecordAt({ format: 'chat', log }, 6)).toBeUndefined();
    expect(spillwayRecordAt({ format: 'spillway' }, 6)).toBeUndefined();
    expect(spillwayRecordAt(undefined, 6)).toBeUndefined();
  });
  it('goes to the next and previous problem turn, wrapping around', () => {
    // Problems: line 2 (rank-1 clipped), 4 (over budget), 5 (rank-1 dropped).
    expect(findProblemTurn(log.records, 1, 1, ALL_CHECKS)?.line).toBe(2);
    expect(findProblemTurn(log.records, 2, 1, ALL_CHECKS)?.line).toBe(4);
    expect(findProblemTurn(log.records, 3, 1, ALL_CHECKS)?.line).toBe(4); // from a malformed line
    expect(findProblemTurn(log.records, 5, 1, ALL_CHECKS)?.line).toBe(2); // wraps
    expect(findProblemTurn(log.records, 4, -1, ALL_CHECKS)?.line).toBe(2);
    expect(findProblemTurn(log.records, 2, -1, ALL_CHECKS)?.line).toBe(5); // wraps backwards
    expect(findProblemTurn(log.records, 1, 1, { ...ALL_CHECKS, rank1Clipped: false, rank1Dropped: false })?.line).toBe(4);
    expect(findProblemTurn([audited(1)], 1, 1, ALL_CHECKS)).toBeUndefined();
  });
  it('picks the best-ranked passage and lists lost evidence', () => {
    const l = ledger({ segments: [seg({ id: 'a', kind: 'passage', rank: 3 }), seg({ id: 'b', kind: 'passage', rank: 1, fate: 'clipped' }), seg({ id: 'q', kind: 'query' })] });
    expect(rank1Passage(l)?.id).toBe('b');
    expect(lostEvidence(record({ evidence: ['a', 'b', 'zz'] }), l).map((e) => [e.id, e.fate])).toEqual([
      ['b', 'clipped'],
      ['zz', undefined],
    ]);
  });
});
