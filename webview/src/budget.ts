/**
 * The budget bar of one turn: where every token of the context window went.
 * Pure arithmetic on the row the host sent (no tokenising here):
 *   kept tokens by kind + framing & joins = used          (the ledger's definition of `joins`)
 *   free    = max(0, budget − used)
 *   reserve = the output reserve, minus what an over-budget prompt ate of it
 *   spill   = tokens of segments that were not sent, drawn beyond the window's end
 * Laid end to end the drawn parts cover max(window, used) + spill.
 */
import type { TurnRow } from '../../extension/protocol/messages';
import type { SegmentKind } from '../../extension/core/log/types';

export type PartKey = SegmentKind | 'framing' | 'free' | 'reserve' | 'spill';

export const KIND_ORDER: readonly SegmentKind[] = ['instructions', 'history', 'query', 'passage', 'tool'];

export const PART_LABEL: Record<PartKey, string> = {
  instructions: 'instructions',
  history: 'history',
  query: 'query',
  passage: 'passages',
  tool: 'tool',
  framing: 'framing & joins',
  free: 'free',
  reserve: 'output reserve',
  spill: 'spill (not sent)',
};

export interface BudgetPart {
  key: PartKey;
  /** The figure to report (may differ from `drawn`, e.g. negative joins or a reserve eaten by an over-budget prompt). */
  tokens: number;
  /** Width on the bar, in tokens, ≥ 0. */
  drawn: number;
  /** Left edge on the bar, in tokens. */
  start: number;
}

export interface BudgetBar {
  parts: BudgetPart[];
  /** Total drawn length in tokens: max(window, used) + spill. */
  scale: number;
  used: number;
  budget: number;
  window: number;
  reserve: number;
  over: number;
  free: number;
  spill: number;
}

export function budgetBar(row: TurnRow, spill: number): BudgetBar {
  const over = Math.max(0, row.used - row.budget);
  const free = Math.max(0, row.budget - row.used);
  const raw: Array<[PartKey, number, number]> = [];
  for (const k of KIND_ORDER) raw.push([k, row.byKind[k] ?? 0, Math.max(0, row.byKind[k] ?? 0)]);
  const fj = row.framing + row.joins;
  raw.push(['framing', fj, Math.max(0, fj)]);
  raw.push(['free', free, free]);
  raw.push(['reserve', row.reserve, Math.max(0, row.reserve - over)]);
  raw.push(['spill', spill, Math.max(0, spill)]);
  const parts: BudgetPart[] = [];
  let at = 0;
  for (const [key, tokens, drawn] of raw) {
    parts.push({ key, tokens, drawn, start: at });
    at += drawn;
  }
  return { parts, scale: at, used: row.used, budget: row.budget, window: row.window, reserve: row.reserve, over, free, spill };
}
