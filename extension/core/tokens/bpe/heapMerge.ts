/**
 * Exact byte-pair merge for one pre-tokenised piece in O(m log m) for m bytes.
 *
 * The reference merge (tiktoken's `_byte_pair_merge`, and gpt-tokenizer's `bytePairMerge`) repeatedly scans
 * all adjacent part pairs, merges the pair whose concatenated bytes have the lowest rank (leftmost on ties)
 * and stops when no adjacent pair is a token: O(m²) per piece. Here the same choice is made with a binary
 * min-heap of candidate pairs keyed by (rank, start offset) and a doubly linked list of parts:
 * - the leftmost-on-ties rule is the key order, because a part keeps its start offset for life and list
 *   order equals offset order;
 * - a merge changes only two pairs (the merged part with its new right neighbour, and its left neighbour
 *   with the merged part); both are recomputed and pushed; the old entries become stale;
 * - an entry is stale iff `pairRank[start]` no longer equals its rank: ranks are unique per byte string,
 *   and a pair starting at `start` only ever grows, so an equal rank means the very same pair.
 * Every pop either merges (≤ m−1 times) or discards a stale entry (≤ 2 pushes per merge), so the loop runs
 * O(m) times at O(log m) each. The chosen merge sequence is the reference's, hence identical ids.
 */
import type { RankTable } from './rankTable';

interface MergeState {
  /** next[s]: start offset of the part after the part starting at s (m = end of piece). */
  next: Int32Array;
  parts: number;
}

function runMerge(table: RankTable, bin: string): MergeState {
  const m = bin.length;
  const next = new Int32Array(m + 1);
  const prev = new Int32Array(m + 1);
  const pairRank = new Int32Array(m + 1).fill(-1);
  for (let i = 0; i <= m; i++) {
    next[i] = i + 1;
    prev[i] = i - 1;
  }
  // Heap key = rank * scale + start; scale is a power of two > m so keys stay exact doubles.
  let scale = 1;
  while (scale <= m) scale *= 2;
  const heap = new Float64Array(3 * m + 4);
  let size = 0;
  const push = (key: number): void => {
    let i = size++;
    while (i > 0) {
      const p = (i - 1) >> 1;
      const pk = heap[p]!;
      if (pk <= key) break;
      heap[i] = pk;
      i = p;
    }
    heap[i] = key;
  };
  const pop = (): number => {
    const top = heap[0]!;
    const last = heap[--size]!;
    let i = 0;
    for (;;) {
      let c = 2 * i + 1;
      if (c >= size) break;
      const r = c + 1;
      if (r < size && heap[r]! < heap[c]!) c = r;
      if (heap[c]! >= last) break;
      heap[i] = heap[c]!;
      i = c;
    }
    heap[i] = last;
    return top;
  };

  for (let i = 0; i + 1 < m; i++) {
    const r = table.rankOf(bin, i, i + 2);
    pairRank[i] = r;
    if (r >= 0) push(r * scale + i);
  }
  let parts = m;
  while (size > 0) {
    const key = pop();
    const rank = Math.floor(key / scale);
    const s = key - rank * scale;
    if (pairRank[s] !== rank) continue; // stale
    const right = next[s]!;
    const after = next[right]!;
    // absorb the right part
    next[s] = after;
    if (after < m) prev[after] = s;
    pairRank[right] = -1;
    parts--;
    // pair (merged part, its new right neighbour)
    if (after < m) {
      const r = table.rankOf(bin, s, next[after]!);
      pairRank[s] = r;
      if (r >= 0) push(r * scale + s);
    } else {
      pairRank[s] = -1;
    }
    // pair (left neighbour, merged part)
    if (s > 0) {
      const p = prev[s]!;
      const r = table.rankOf(bin, p, after);
      pairRank[p] = r;
      if (r >= 0) push(r * scale + p);
    }
  }
  return { next, parts };
}

/** Token ids of one piece given as a binary string (one char per UTF-8 byte). Appends to `out`. */
export function mergeEncode(table: RankTable, bin: string, out: number[]): void {
  const m = bin.length;
  if (m === 0) return;
  const whole = table.rankOfBinary(bin);
  if (whole >= 0) {
    out.push(whole);
    return;
  }
  const { next } = runMerge(table, bin);
  for (let s = 0; s < m; s = next[s]!) {
    const id = table.rankOf(bin, s, next[s]!);
    if (id < 0) throw new Error(`BPE invariant broken: bytes ${s}..${next[s]} are not a token`);
    out.push(id);
  }
}

/** Number of tokens of one piece given as a binary string; no id array is built. */
export function mergeCount(table: RankTable, bin: string): number {
  const m = bin.length;
  if (m === 0) return 0;
  if (table.rankOfBinary(bin) >= 0) return 1;
  return runMerge(table, bin).parts;
}
