import { describe, expect, it } from 'vitest';
import { codeLensTitle, fateCounts, logSummary, statusText } from '../../extension/core/view/codeLens';
import { segmentHoverRows } from '../../extension/core/view/hover';
import { audited, ledger, seg } from './ledgerFixture';

describe('codeLensTitle', () => {
  it('shows used / budget, free room, and passages clipped and dropped', () => {
    // 7,168 budget − 7,034 used = 134 free; two clipped passages, one dropped; spill 900 + 400 + 312 = 1,612.
    const l = ledger({
      used: 7034,
      free: 134,
      spill: 1612,
      segments: [
        seg({ id: 'p1', kind: 'passage', rank: 1, fate: 'clipped', tokens: 1000, keptTokens: 100 }),
        seg({ id: 'p2', kind: 'passage', rank: 2, fate: 'clipped', tokens: 500, keptTokens: 100 }),
        seg({ id: 'p3', kind: 'passage', rank: 3, fate: 'dropped', tokens: 312, keptTokens: 0 }),
        seg({ id: 'p4', kind: 'passage', rank: 4 }),
      ],
    });
    expect(codeLensTitle(l)).toBe('7,034 / 7,168 · 134 free · 2 clipped · 1 dropped · 1,612 spilled');
  });

  it('says how far over the budget a turn is, and history cut', () => {
    const l = ledger({
      used: 9000,
      free: 0,
      over: 1832,
      state: 'over-budget',
      segments: [seg({ id: 'h1', kind: 'history', fate: 'dropped', keptTokens: 0 }), seg({ id: 'h2', kind: 'history', fate: 'dropped', keptTokens: 0 })],
      spill: 20,
    });
    // 9,000 − 7,168 = 1,832 over.
    expect(codeLensTitle(l)).toBe('9,000 / 7,168 · 1,832 over · 2 history segments cut · 20 spilled');
  });

  it('names the over-before-passages state', () => {
    expect(codeLensTitle(ledger({ used: 7200, free: 0, over: 32, state: 'over-before-passages' }))).toBe('7,200 / 7,168 · 32 over before passages');
  });

  it('counts fates by kind', () => {
    const l = ledger({ segments: [seg({ id: 'h', kind: 'history', fate: 'clipped' }), seg({ id: 'p', kind: 'passage', fate: 'dropped' })] });
    expect(fateCounts(l)).toEqual({ passagesClipped: 0, passagesDropped: 1, historyDropped: 1 });
  });
});

describe('status bar summary', () => {
  it('counts turns, over-budget turns and rank-1 clipped', () => {
    const log = {
      file: 'x.jsonl',
      records: [
        audited(1, { state: 'over-budget', rank1Fate: 'clipped' }),
        audited(2, { state: 'over-before-passages', rank1Fate: 'dropped' }),
        audited(3, { rank1Fate: 'clipped' }),
        audited(4),
      ],
      issues: [{ line: 5, column: 1, code: 'bad-json', message: 'x' }],
    };
    const s = logSummary(log);
    expect(s).toEqual({ turns: 4, overBudget: 2, rank1Clipped: 2, rank1Dropped: 1, malformed: 1 });
    expect(statusText(s)).toBe('$(symbol-ruler) 4 turns · 2 over · 2 rank-1 clipped');
  });
});

describe('segment hover', () => {
  it('gives tokens, fate, cut point and which side of the cut the pointer is on', () => {
    const s = seg({ id: 'p1', kind: 'passage', rank: 1, fate: 'clipped', tokens: 300, keptTokens: 120, cut: { token: 120, char: 480 } });
    const rows = segmentHoverRows(s, 7168, 1200, 600);
    expect(rows).toEqual([
      { label: 'Segment', value: 'p1 (passage, user, rank 1)' },
      { label: 'Tokens', value: '300 (1,200 characters)' },
      { label: 'Fate', value: 'clipped · 120 kept, 180 spilled' },
      { label: 'Cut point', value: 'after token 120, at character 480 of 1,200' },
      { label: 'Here', value: 'in the spilled part (not sent)' },
    ]);
    expect(segmentHoverRows(s, 7168, 1200, 479).at(-1)).toEqual({ label: 'Here', value: 'in the kept part' });
  });
  it('gives the share of budget for a kept segment', () => {
    // 717 / 7,168 = 0.10003 → 10%.
    const rows = segmentHoverRows(seg({ id: 'i', kind: 'instructions', tokens: 717, keptTokens: 717 }), 7168, 2000);
    expect(rows[2]).toEqual({ label: 'Fate', value: 'kept whole · 10% of budget' });
  });
});
