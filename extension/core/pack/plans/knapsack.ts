/**
 * Exact 0/1 knapsack: choose items maximising Σ value with Σ cost ≤ capacity.
 *
 * Method `dp` (default while n × C ≤ DP_CELL_LIMIT): the textbook dynamic programme over capacity,
 * best[c] = max(best[c], best[c − cost_i] + value_i) for c from C down to cost_i, item by item, with
 * one bit per (item, capacity) to recover the chosen set, where C = min(capacity, Σ cost) / g and g
 * is the gcd of all costs and the capacity (an exact rescaling). Item k only visits capacities in
 * [C − Σ_{j>k} cost_j, Σ_{j≤k} cost_j], so the work is at most n·min(C, excess + max cost) where
 * excess = Σ cost − C: O(n·C) time in the worst case, O(C) doubles + n·C bits of memory. For a
 * 1M-token room and 64 passages: at most 64M cell updates and an 8 MB bitset.
 *
 * Method `bnb` (used above the cell limit): depth-first branch and bound, items by value density,
 * bounded by the fractional (Dantzig) relaxation — exact, usually fast, exponential in the worst case.
 * Values ≤ 0 can never raise the total, so such items are never chosen.
 */

export const DP_CELL_LIMIT = 1 << 29; // 64 MiB of choice bits

export interface KnapsackResult {
  chosen: number[];
  value: number;
  cost: number;
  method: 'all' | 'dp' | 'bnb';
}

function gcd(a: number, b: number): number {
  while (b) [a, b] = [b, a % b];
  return a;
}

export function knapsack(costs: readonly number[], values: readonly number[], capacity: number, method?: 'dp' | 'bnb'): KnapsackResult {
  const items = costs.map((_, i) => i).filter((i) => values[i]! > 0 && costs[i]! <= capacity);
  const free = items.filter((i) => costs[i]! <= 0);
  const paid = items.filter((i) => costs[i]! > 0);
  const total = paid.reduce((s, i) => s + costs[i]!, 0);
  const finish = (chosen: number[], m: KnapsackResult['method']): KnapsackResult => {
    const all = [...free, ...chosen].sort((a, b) => a - b);
    return { chosen: all, value: all.reduce((s, i) => s + values[i]!, 0), cost: all.reduce((s, i) => s + Math.max(0, costs[i]!), 0), method: m };
  };
  if (capacity < 0) return { chosen: [], value: 0, cost: 0, method: 'all' };
  if (total <= capacity) return finish(paid, 'all');
  let g = Math.floor(capacity);
  for (const i of paid) g = gcd(g, costs[i]!);
  g = Math.max(1, g);
  const C = Math.floor(Math.min(capacity, total) / g);
  const use = method ?? (paid.length * (C + 1) <= DP_CELL_LIMIT ? 'dp' : 'bnb');
  return use === 'dp' ? finish(dp(paid, costs, values, C, g), 'dp') : finish(bnb(paid, costs, values, capacity), 'bnb');
}

function dp(items: readonly number[], costs: readonly number[], values: readonly number[], C: number, g: number): number[] {
  const n = items.length;
  const w = items.map((it) => costs[it]! / g);
  // prefix[k] = Σ w[0..k], suffix[k] = Σ w[k..n−1]: item k only needs capacities in
  // [C − suffix[k+1], prefix[k]] — below, no later item or the answer ever reads the cell; above,
  // every item so far fits, so the value is best[prefix[k]] and is not stored.
  const prefix: number[] = [];
  let run = 0;
  for (const x of w) prefix.push((run += x));
  const suffix: number[] = new Array<number>(n + 1).fill(0);
  for (let k = n - 1; k >= 0; k--) suffix[k] = suffix[k + 1]! + w[k]!;
  const best = new Float64Array(C + 1);
  const row = C + 1;
  const take = new Uint8Array(Math.ceil((n * row) / 8));
  for (let k = 0; k < n; k++) {
    const wk = w[k]!;
    const v = values[items[k]!]!;
    const base = k * row;
    const hi = Math.min(C, prefix[k]!);
    const lo = Math.max(wk, C - suffix[k + 1]!);
    // Cells above the previous prefix were not stored: without item k they hold "everything so far".
    const prev = k === 0 ? 0 : Math.min(C, prefix[k - 1]!);
    for (let c = prev + 1; c <= hi; c++) best[c] = best[prev]!;
    for (let c = hi; c >= lo; c--) {
      const cand = best[c - wk]! + v;
      if (cand > best[c]!) {
        best[c] = cand;
        const bit = base + c;
        take[bit >> 3]! |= 1 << (bit & 7);
      }
    }
  }
  const chosen: number[] = [];
  let c = C;
  for (let k = n - 1; k >= 0; k--) {
    if (c >= prefix[k]!) {
      for (let j = k; j >= 0; j--) chosen.push(items[j]!);
      break;
    }
    const bit = k * row + c;
    if (take[bit >> 3]! & (1 << (bit & 7))) {
      chosen.push(items[k]!);
      c -= w[k]!;
    }
  }
  return chosen;
}

function bnb(items: readonly number[], costs: readonly number[], values: readonly number[], capacity: number): number[] {
  const order = [...items].sort((a, b) => values[b]! / costs[b]! - values[a]! / costs[a]! || a - b);
  const n = order.length;
  let bestValue = -1;
  let bestSet: number[] = [];
  const current: number[] = [];
  const bound = (k: number, room: number, value: number): number => {
    let b = value;
    for (let j = k; j < n; j++) {
      const it = order[j]!;
      if (costs[it]! <= room) {
        room -= costs[it]!;
        b += values[it]!;
      } else return b + (values[it]! * room) / costs[it]!;
    }
    return b;
  };
  const visit = (k: number, room: number, value: number): void => {
    if (value > bestValue) {
      bestValue = value;
      bestSet = [...current];
    }
    if (k === n || bound(k, room, value) <= bestValue) return;
    const it = order[k]!;
    if (costs[it]! <= room) {
      current.push(it);
      visit(k + 1, room - costs[it]!, value + values[it]!);
      current.pop();
    }
    visit(k + 1, room, value);
  };
  visit(0, capacity, 0);
  return bestSet;
}
