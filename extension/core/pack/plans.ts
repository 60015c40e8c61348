/**
 * Packing plans: the rule that decides, under a budget, which segments are kept, clipped or dropped.
 * A plan works on a PromptMeter (exact counts) and leaves it holding the packed prompt.
 */
import type { LogRecord, Segment } from '../log/types';
import type { CutPoint } from '../audit/types';
import type { PromptMeter } from './meter';

export interface PlanContext {
  record: LogRecord;
  budget: number;
  meter: PromptMeter;
}

export interface PlanResult {
  /** Instructions + query (+ tool output) alone exceed the budget: no passage could be placed. */
  overBeforePassages: boolean;
  /** Cut points of clipped segments, by segment index. */
  cuts: Map<number, CutPoint>;
}

export interface PackingPlan {
  /** The canonical spec string, e.g. `recent-first`. */
  name: string;
  pack(ctx: PlanContext): PlanResult;
}

/** A clipped passage must keep at least this many tokens, else it is dropped (issue #2 rule). */
export const MIN_CLIP_TOKENS = 32;

export const isMandatory = (s: Segment): boolean => s.kind === 'instructions' || s.kind === 'query' || s.kind === 'tool';

/** History segments grouped by turn, newest turn first (segments without a turn are their own group). */
export function historyGroupsNewestFirst(segments: readonly Segment[]): number[][] {
  const groups = new Map<string, { key: number; members: number[] }>();
  segments.forEach((s, i) => {
    if (s.kind !== 'history') return;
    const k = s.turn !== undefined ? `t${s.turn}` : `i${i}`;
    let g = groups.get(k);
    if (!g) {
      g = { key: s.turn ?? Number.NEGATIVE_INFINITY, members: [] };
      groups.set(k, g);
    }
    g.members.push(i);
  });
  return [...groups.values()]
    .sort((a, b) => b.key - a.key || Math.max(...b.members) - Math.max(...a.members))
    .map((g) => g.members);
}

/** Passage indices in rank order (ties: prompt order). */
export function passagesByRank(segments: readonly Segment[]): number[] {
  return segments
    .map((s, i) => ({ s, i }))
    .filter(({ s }) => s.kind === 'passage')
    .sort((a, b) => (a.s.rank ?? Infinity) - (b.s.rank ?? Infinity) || a.i - b.i)
    .map(({ i }) => i);
}

/** Places the mandatory segments; returns false when they alone exceed the budget. */
export function placeMandatory({ meter, budget }: PlanContext): boolean {
  meter.segments.forEach((s, i) => {
    if (isMandatory(s)) meter.include(i);
  });
  return meter.used() <= budget;
}

/** Whole history turns, newest first, stopping at the first that does not fit. */
export function placeHistory({ meter, budget }: PlanContext): void {
  for (const g of historyGroupsNewestFirst(meter.segments)) if (!meter.tryIncludeAll(g, budget)) break;
}

/** Passages in the given order: whole while they fit; the first that does not is clipped (≥ minTokens) or dropped; the rest dropped. */
export function placePassagesInOrder({ meter, budget }: PlanContext, order: readonly number[], cuts: Map<number, CutPoint>, minTokens = MIN_CLIP_TOKENS): void {
  for (const i of order) {
    if (meter.tryInclude(i, budget)) continue;
    const cut = meter.clipToFit(i, budget, minTokens);
    if (cut) cuts.set(i, cut);
    break;
  }
}

/**
 * `recent-first` (default): instructions and query always; then history turns newest to oldest,
 * whole turns only, stopping at the first that does not fit; then passages in rank order, the first
 * that does not fit clipped if at least 32 tokens fit (else dropped), all after it dropped.
 */
export const recentFirst: PackingPlan = {
  name: 'recent-first',
  pack(ctx) {
    const cuts = new Map<number, CutPoint>();
    if (!placeMandatory(ctx)) return { overBeforePassages: true, cuts };
    placeHistory(ctx);
    placePassagesInOrder(ctx, passagesByRank(ctx.meter.segments), cuts);
    return { overBeforePassages: false, cuts };
  },
};

export class PlanError extends Error {}

type PlanFactory = (spec: string) => PackingPlan | undefined;
const factories: PlanFactory[] = [(spec) => (spec === 'recent-first' ? recentFirst : undefined)];
const described: string[] = ['recent-first'];

/** Lets plan modules add themselves (name patterns listed in errors). */
export function registerPlan(description: string, factory: PlanFactory): void {
  described.push(description);
  factories.unshift(factory);
}

export function knownPlans(): readonly string[] {
  return described;
}

/** Resolves a plan spec; throws PlanError naming the valid plans. */
export function parsePlan(spec: string | undefined): PackingPlan {
  const s = (spec ?? 'recent-first').trim();
  for (const f of factories) {
    const p = f(s);
    if (p) return p;
  }
  throw new PlanError(`unknown packing plan "${s}" (valid: ${described.join(', ')})`);
}

// Composed plans (evidence-first, split:P, best-value, fusion:L, "+" modifiers): extension/core/pack/plans/.
// Their modules only use this file's exports inside functions, so the import cycle is safe.
import { composedPlanFactory, COMPOSED_PLANS_DESCRIPTION } from './plans/index';
registerPlan(COMPOSED_PLANS_DESCRIPTION, composedPlanFactory);
