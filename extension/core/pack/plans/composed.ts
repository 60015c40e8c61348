/**
 * The composed packing plans (docs/packing-plans.md): bases evidence-first, split:P, best-value and
 * fusion:L, and recent-first with modifiers. Each works on the PromptMeter, so every figure is an
 * exact count of the rendered prompt.
 */
import type { CutPoint } from '../../audit/types';
import type { Segment } from '../../log/types';
import { bm25Scores } from '../../analysis/bm25';
import { JOINER } from '../../log/types';
import { historyGroupsNewestFirst, placeMandatory, type PackingPlan, type PlanContext } from '../plans';
import { knapsack } from './knapsack';
import { candidatePassages, edgesOrder, PassagePlacer, type ComposedResult, type DropReason } from './passages';
import { canonicalName, type PlanSpec } from './spec';
import { packFusionWindows, type FusionWindow } from './fusion';

/** A plan that may reorder segments before packing (`order:edges`) or pack per window (`fusion:L`). */
export interface ComposedPlan extends PackingPlan {
  spec: PlanSpec;
  /** New prompt order as indices into the record's segments, or undefined to keep it. */
  arrange?(segments: readonly Segment[]): number[];
  pack(ctx: PlanContext): ComposedResult;
  /** fusion:L only: every window. */
  windows?(ctx: PlanContext): { windows: FusionWindow[]; result: ComposedResult; window: number };
}

/** History turns newest first from group `from`; returns the index of the first group that did not fit. */
function placeHistoryFrom(ctx: PlanContext, groups: number[][], from: number, limit: number): number {
  let g = from;
  for (; g < groups.length; g++) if (!ctx.meter.tryIncludeAll(groups[g]!, limit)) break;
  return g;
}

/**
 * Relevance for best-value: the retriever `score` when every candidate has a finite one, else
 * BM25+ of the passage against the query text (analysis/bm25, minisearch).
 */
export function relevance(segments: readonly Segment[], candidates: readonly number[]): { values: number[]; basis: 'score' | 'bm25' } {
  const scores = candidates.map((i) => segments[i]!.score);
  if (candidates.length > 0 && scores.every((s) => typeof s === 'number' && Number.isFinite(s))) return { values: scores as number[], basis: 'score' };
  const query = segments.filter((s) => s.kind === 'query').map((s) => s.text).join(JOINER);
  const bm = bm25Scores(query, candidates.map((i, n) => ({ id: String(n), text: segments[i]!.text })));
  return { values: candidates.map((_, n) => bm.get(String(n)) ?? 0), basis: 'bm25' };
}

function packBestValue(ctx: PlanContext, placer: PassagePlacer, candidates: number[]): void {
  const { meter, budget } = ctx;
  const base = meter.used();
  // Exact marginal cost of each passage on its own (its message framing + its text at the allowed length).
  const costs: number[] = [];
  const usable: number[] = [];
  for (const i of candidates) {
    const lim = placer.limit(i);
    if (!lim) continue;
    meter.set(i, lim.chars);
    costs.push(meter.used() - base);
    meter.exclude(i);
    usable.push(i);
  }
  const { values } = relevance(meter.segments, usable);
  let chosen = knapsack(costs, values, budget - base).chosen.map((n) => usable[n]!);
  // Passages sharing one chat message are not exactly additive (the joiner and the seam): verify,
  // and while over, give up the chosen passage of least value (ties: the worse rank).
  for (;;) {
    for (const i of chosen) placer.tryWhole(i, Number.POSITIVE_INFINITY);
    if (meter.used() <= budget) break;
    for (const i of chosen) meter.exclude(i);
    const worst = chosen.reduce((a, b) => (values[usable.indexOf(b)]! <= values[usable.indexOf(a)]! ? b : a));
    chosen = chosen.filter((i) => i !== worst);
  }
}

export function makeComposedPlan(spec: PlanSpec): ComposedPlan {
  const name = canonicalName(spec);
  const { base, mods } = spec;
  const pack = (ctx: PlanContext): ComposedResult => {
    const cuts = new Map<number, CutPoint>();
    const reasons = new Map<number, DropReason>();
    const candidates = candidatePassages(ctx.meter.segments, mods, reasons);
    if (!placeMandatory(ctx)) return { overBeforePassages: true, cuts, reasons };
    const placer = new PassagePlacer(ctx.meter, mods, cuts, reasons);
    const groups = historyGroupsNewestFirst(ctx.meter.segments);
    switch (base.kind) {
      case 'recent-first':
        placeHistoryFrom(ctx, groups, 0, ctx.budget);
        placer.placeInOrder(candidates, ctx.budget);
        break;
      case 'evidence-first':
        placer.placeInOrder(candidates, ctx.budget);
        placeHistoryFrom(ctx, groups, 0, ctx.budget);
        break;
      case 'split': {
        const base0 = ctx.meter.used();
        const room = ctx.budget - base0;
        const passageShare = Math.floor((room * base.percent) / 100);
        // 1. History takes whole turns inside its own share.
        const next = placeHistoryFrom(ctx, groups, 0, base0 + (room - passageShare));
        // 2. Passages get their share plus whatever history left unused.
        placer.placeInOrder(candidates, ctx.budget);
        // 3. Room the passages left unused goes back to history, continuing with the next older turn.
        placeHistoryFrom(ctx, groups, next, ctx.budget);
        break;
      }
      case 'best-value':
        placeHistoryFrom(ctx, groups, 0, ctx.budget);
        packBestValue(ctx, placer, candidates);
        break;
      case 'fusion': {
        // As a single prompt (e.g. `spillway audit --plan fusion:L`) the plan shows its first window.
        const first = packFusionWindows(ctx, base.window, mods, { maxWindows: 1 });
        return first.result;
      }
    }
    return { overBeforePassages: false, cuts, reasons };
  };
  const plan: ComposedPlan = { name, spec, pack };
  if (mods.edges) plan.arrange = edgesOrder;
  if (base.kind === 'fusion') plan.windows = (ctx) => ({ ...packFusionWindows(ctx, base.window, mods), window: base.window });
  return plan;
}
