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
