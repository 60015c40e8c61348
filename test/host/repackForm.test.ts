import { describe, expect, it } from 'vitest';
import { budgetPrompt, parseTokenInput, parseTokenList, planSlug, repackOutputName, validateBudgetInput } from '../../extension/core/view/repackForm';

describe('budget input', () => {
  it('accepts plain numbers, separators and k/m suffixes (k = 1,024 as in the CLI)', () => {
    expect(parseTokenInput('8192')).toBe(8192);
    expect(parseTokenInput(' 8,192 ')).toBe(8192);
    expect(parseTokenInput('8k')).toBe(8 * 1024); // 8,192
    expect(parseTokenInput('8K')).toBe(8192);
    expect(parseTokenInput('1m')).toBe(1024 * 1024); // 1,048,576
    expect(parseTokenInput('8.5k')).toBeUndefined();
    expect(parseTokenInput('-1')).toBeUndefined();
    expect(parseTokenInput('eight')).toBeUndefined();
  });

  it('validates: empty, non-numbers, zero and absurd sizes are refused with a reason', () => {
    expect(validateBudgetInput('4096')).toBeUndefined();
    expect(validateBudgetInput('4k')).toBeUndefined();
    expect(validateBudgetInput('')).toMatch(/Enter the new budget/);
    expect(validateBudgetInput('4 thousand')).toMatch(/whole number/);
    expect(validateBudgetInput('0')).toMatch(/at least 1/);
    expect(validateBudgetInput('200000000')).toMatch(/100,000,000/);
    // 95,368 k = 97,656,832 ≤ 100,000,000; 97,657 k = 100,000,768 > 100,000,000
    expect(validateBudgetInput('95368k')).toBeUndefined();
    expect(validateBudgetInput('97657k')).toMatch(/100,000,000/);
  });

  it('shows the current window and reserve in the prompt', () => {
    expect(budgetPrompt({ window: 8192, reserve: 1024, budget: 7168 })).toMatch(/^Now: window 8,192 − reserve 1,024 = budget 7,168 \(first record\)\. /);
    expect(budgetPrompt(undefined)).not.toMatch(/Now:/);
  });
});

describe('token lists (sweep budgets, k)', () => {
  it('parses, sorts and de-duplicates', () => {
    expect(parseTokenList('16k, 4k,8k;8192 32k', 'budget')).toEqual({ ok: true, values: [4096, 8192, 16384, 32768] });
  });
  it('names the bad entry', () => {
    expect(parseTokenList('4k,lots', 'budget')).toEqual({ ok: false, error: '"lots" is not a whole number like 8192 or 8k.' });
    expect(parseTokenList('', 'budget').ok).toBe(false);
    expect(parseTokenList('0', 'passage count')).toEqual({ ok: false, error: '"0" must be between 1 and 100,000,000.' });
  });
});

describe('output naming', () => {
  it('slugs plan specs into file-name parts', () => {
    expect(planSlug(undefined)).toBe('own-plan');
    expect(planSlug('evidence-first')).toBe('evidence-first');
    expect(planSlug('split:60')).toBe('split60');
    expect(planSlug('recent-first+cap:200+order:edges')).toBe('recent-first-cap200-orderedges');
    expect(planSlug('recent-first+dedupe:0.8')).toBe('recent-first-dedupe08');
    expect(planSlug('../../etc')).toBe('etc');
  });

  it('names the new log beside the source, never the source itself', () => {
    expect(repackOutputName('fares-and-passes.jsonl', { budget: 512 })).toBe('fares-and-passes.repacked-own-plan-512.jsonl');
    expect(repackOutputName('trips.ndjson', { plan: 'split:60', budget: 4096, encoding: 'cl100k_base' })).toBe('trips.repacked-split60-4096-cl100k_base.jsonl');
    expect(repackOutputName('x.jsonl', { plan: 'best-value', budget: 8192 })).toBe('x.repacked-best-value-8192.jsonl');
    // Re-packing a re-pack with the same options still gives a new name.
    const once = repackOutputName('a.jsonl', { budget: 100 });
    expect(repackOutputName(once, { budget: 100 })).not.toBe(once);
    expect(repackOutputName('.jsonl', { budget: 1 })).toBe('log.repacked-own-plan-1.jsonl');
  });
});
