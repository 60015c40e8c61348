import { beforeAll, describe, expect, it } from 'vitest';
import { Accountant } from '../../../extension/core/tokens/accountant';
import { sweep } from '../../../extension/core/repack/sweep';
import { PlanError } from '../../../extension/core/pack/plans';
import { record1 } from '../../fixtures/repack/records';

let acct: Accountant;
beforeAll(async () => {
  acct = await Accountant.create();
}, 60_000);

const item = () => ({ line: 1, offset: 0, record: { ...record1(), evidence: ['p2'] } });

describe('sweep', () => {
  it('R1 with evidence p2 (50 tokens), by hand', async () => {
    const r = await sweep([item()], { budgets: [150, 185], plans: ['recent-first', 'evidence-first'], prices: { 'gpt-4': 10 } }, { accountant: acct });
    const cell = (budget: number, plan: string) => r.cells.find((c) => c.budget === budget && c.plan === plan)!;
    // 150, recent-first: 85 + p1 = 145; p2 dropped → 0 of 50 kept.
    expect(cell(150, 'recent-first')).toMatchObject({ tokens: 145, evidenceRetention: 0, evidenceWhole: 0, rank1Lost: 0 });
    // 150, evidence-first: 15 + 60 + 50 = 125, no history → p2 whole.
    expect(cell(150, 'evidence-first')).toMatchObject({ tokens: 125, evidenceRetention: 1, evidenceWhole: 1 });
    // 185, recent-first: 85 + 60 + p2 clipped to 40 = 185 → 40/50.
    expect(cell(185, 'recent-first')).toMatchObject({ tokens: 185, evidenceRetention: 0.8, evidenceWhole: 0 });
    // 185, evidence-first: 15 + 150 = 165; turn 2 → 195 > 185.
    expect(cell(185, 'evidence-first')).toMatchObject({ tokens: 165, evidenceRetention: 1 });
    // Cost per 1,000 turns at 10 per million: 145 × 10 / 10⁶ × 1,000 = 1.45.
    expect(cell(150, 'recent-first').costPer1000Turns).toBeCloseTo(1.45, 12);
  });

  it('the k axis: top:1 leaves p2 out; evidence-first+top:1 at 150 then has room for all history: 15 + 60 + 30 + 40 = 145', async () => {
    const r = await sweep([item()], { budgets: [150], plans: ['evidence-first'], ks: [1, 3] }, { accountant: acct });
    expect(r.cells.map((c) => [c.k, c.tokens, c.evidenceRetention])).toEqual([
      [1, 145, 0],
      [3, 125, 1],
    ]);
  });

  it('an unknown plan fails before any record is read, naming the valid plans', async () => {
    await expect(sweep([item()], { budgets: [100], plans: ['widest-first'] }, { accountant: acct })).rejects.toThrow(PlanError);
  });
});
