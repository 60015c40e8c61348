/** The composed packing plans, registered with `parsePlan` by `../plans.ts`. */
import type { PackingPlan } from '../plans';
import { makeComposedPlan, type ComposedPlan } from './composed';
import { parsePlanSpec } from './spec';

export { makeComposedPlan, relevance, type ComposedPlan } from './composed';
export { knapsack, DP_CELL_LIMIT, type KnapsackResult } from './knapsack';
export { candidatePassages, edgesOrder, lastSentenceEnd, setResemblance, DEDUPE_SHINGLE_WORDS, type DropReason } from './passages';
export { packFusionWindows, type FusionWindow } from './fusion';
export { parsePlanSpec, canonicalName, withTop, type PlanSpec, type Modifiers, type BaseSpec } from './spec';

export const COMPOSED_PLANS_DESCRIPTION =
  'evidence-first, split:P (P = 0–100), best-value, fusion:L (L = tokens per window); any plan, recent-first included, ' +
  'with modifiers joined by "+": top:K, dedupe:R (0 < R ≤ 1), cap:N, cut:sentence, order:edges (e.g. recent-first+cap:200+order:edges)';

/** Ready-made choices for a quick pick (the host's "Re-pack Log Under a New Budget…"); any spec in the syntax above is valid too. */
export const PLAN_CHOICES: readonly { plan: string; detail: string }[] = [
  { plan: 'recent-first', detail: 'instructions and query, history newest first, then passages by rank (the default)' },
  { plan: 'evidence-first', detail: 'instructions and query, passages by rank, then history newest first' },
  { plan: 'split:60', detail: 'passages get 60% of the room after instructions and query, history the rest; unused room flows across' },
  { plan: 'best-value', detail: 'the passages with the most total relevance that fit (exact knapsack)' },
  { plan: 'recent-first+dedupe:0.8', detail: 'recent-first, near-duplicate passages (resemblance ≥ 0.8) left out' },
  { plan: 'recent-first+cap:200', detail: 'recent-first, each passage cut to at most 200 tokens first' },
  { plan: 'recent-first+order:edges', detail: 'recent-first, strongest passages first and last' },
  { plan: 'recent-first+cut:sentence', detail: 'recent-first, clipped passages end at a sentence end' },
  { plan: 'fusion:512', detail: 'each passage in its own 512-token window with the dialogue context' },
];

const cache = new Map<string, ComposedPlan>();

/** Plain `recent-first` stays the core's own plan; everything else composed is built here. */
export function composedPlanFactory(spec: string): PackingPlan | undefined {
  if (spec === 'recent-first') return undefined;
  let plan = cache.get(spec);
  if (plan) return plan;
  const parsed = parsePlanSpec(spec);
  if (!parsed) return undefined;
  plan = makeComposedPlan(parsed);
  if (cache.size < 1000) cache.set(spec, plan);
  return plan;
}

export function isComposedPlan(p: PackingPlan): p is ComposedPlan {
  return 'spec' in p;
}
