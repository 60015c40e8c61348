import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { knapsack } from '../../../extension/core/pack/plans/knapsack';

/** The reference: every subset of the items (2^n), written independently of the DP. */
function bruteForce(costs: number[], values: number[], capacity: number): number {
  let best = 0;
  for (let mask = 0; mask < 1 << costs.length; mask++) {
    let c = 0;
    let v = 0;
    for (let i = 0; i < costs.length; i++)
      if (mask & (1 << i)) {
        c += costs[i]!;
        v += values[i]!;
      }
    if (c <= capacity && v > best) best = v;
  }
  return best;
}

/** Greedy by rank: items in order, whole, while they fit (what recent-first does with passages, minus the clip). */
function greedyByRank(costs: number[], values: number[], capacity: number): number {
  let room = capacity;
  let v = 0;
  for (let i = 0; i < costs.length; i++) {
    if (costs[i]! > room) break;
    room -= costs[i]!;
    v += Math.max(0, values[i]!);
  }
  return v;
}

const cases = fc
  .array(fc.record({ cost: fc.integer({ min: 1, max: 60 }), value: fc.double({ min: 0, max: 100, noNaN: true }) }), { minLength: 0, maxLength: 12 })
  .chain((items) => fc.record({ items: fc.constant(items), capacity: fc.integer({ min: 0, max: 200 }) }));

describe('best-value knapsack', () => {
  for (const method of ['dp', 'bnb'] as const) {
    it(`${method}: optimal against brute force over all subsets, feasible, and never worse than greedy by rank`, () => {
      fc.assert(
        fc.property(cases, ({ items, capacity }) => {
          const costs = items.map((i) => i.cost);
          const values = items.map((i) => i.value);
          const r = knapsack(costs, values, capacity, method);
          const chosenCost = r.chosen.reduce((s, i) => s + costs[i]!, 0);
          const chosenValue = r.chosen.reduce((s, i) => s + values[i]!, 0);
          expect(new Set(r.chosen).size).toBe(r.chosen.length);
          expect(chosenCost).toBeLessThanOrEqual(capacity);
          expect(chosenValue).toBeCloseTo(r.value, 9);
          expect(r.value).toBeCloseTo(bruteForce(costs, values, capacity), 9);
          expect(r.value).toBeGreaterThanOrEqual(greedyByRank(costs, values, capacity) - 1e-9);
        }),
        { numRuns: 400 },
      );
    });
  }

  it('a case by hand: costs 60, 50, 40, values 0.9, 0.8, 0.75, capacity 100 → {0, 2} (1.65); greedy by rank takes {0} (0.9)', () => {
    const r = knapsack([60, 50, 40], [0.9, 0.8, 0.75], 100);
    expect(r.chosen).toEqual([0, 2]);
    expect(r.value).toBeCloseTo(1.65, 12);
    expect(greedyByRank([60, 50, 40], [0.9, 0.8, 0.75], 100)).toBeCloseTo(0.9, 12);
  });

  it('rescales by the gcd of the costs: costs 2000, 3000, 5000 in a room of 7,000 → {2000, 5000}', () => {
    const r = knapsack([2000, 3000, 5000], [1, 1, 3], 7000, 'dp');
    expect(r.chosen).toEqual([0, 2]);
  });

  it('all items fitting is the trivial case; non-positive values are never chosen', () => {
    expect(knapsack([1, 2, 3], [1, 0, -1], 10)).toMatchObject({ chosen: [0], method: 'all' });
  });
});
