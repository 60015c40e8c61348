/**
 * Plan specs: `base(+modifier)*`, e.g. `recent-first+top:5+dedupe:0.8+cap:200+cut:sentence+order:edges`.
 * Bases: recent-first, evidence-first, split:P, best-value, fusion:L. Modifiers may come in any order,
 * each at most once; the canonical name lists them in the fixed order top, dedupe, cap, cut, order.
 * The full rules are in docs/packing-plans.md.
 */

export type BaseSpec =
  | { kind: 'recent-first' }
  | { kind: 'evidence-first' }
  | { kind: 'split'; percent: number }
  | { kind: 'best-value' }
  | { kind: 'fusion'; window: number };

export interface Modifiers {
  /** `top:K`: only the K best-ranked passages are candidates (the sweep's k axis). */
  top?: number;
  /** `dedupe:R`: drop a passage whose w-shingle resemblance to a better-ranked surviving passage is ≥ R. */
  dedupe?: number;
  /** `cap:N`: each passage is cut to at most N tokens before packing. */
  cap?: number;
  /** `cut:sentence`: every cut is moved back to the last sentence end before it. */
  cutSentence?: boolean;
  /** `order:edges`: best passages first and last, weaker ones in the middle. */
  edges?: boolean;
}

export interface PlanSpec {
  base: BaseSpec;
  mods: Modifiers;
}

export const BASE_DESCRIPTIONS = ['evidence-first', 'split:P (P = 0–100)', 'best-value', 'fusion:L (L = tokens per window)'];
export const MODIFIER_DESCRIPTIONS = ['+top:K', '+dedupe:R (0 < R ≤ 1)', '+cap:N', '+cut:sentence', '+order:edges'];

const INT = /^\d+$/;

function parseBase(s: string): BaseSpec | undefined {
  if (s === 'recent-first') return { kind: 'recent-first' };
  if (s === 'evidence-first') return { kind: 'evidence-first' };
  if (s === 'best-value') return { kind: 'best-value' };
  let m = /^split:(\d+)$/.exec(s);
  if (m) {
    const p = Number(m[1]);
    return p <= 100 ? { kind: 'split', percent: p } : undefined;
  }
  m = /^fusion:(\d+)$/.exec(s);
  if (m) {
    const l = Number(m[1]);
    return l >= 1 && Number.isSafeInteger(l) ? { kind: 'fusion', window: l } : undefined;
  }
  return undefined;
}

/** Parses a composed spec; undefined when it is not one (the caller lists the valid plans). */
export function parsePlanSpec(spec: string): PlanSpec | undefined {
  const parts = spec.split('+').map((p) => p.trim());
  const base = parseBase(parts[0] ?? '');
  if (!base) return undefined;
  const mods: Modifiers = {};
  const seen = new Set<string>();
  for (const p of parts.slice(1)) {
    const [key, value = ''] = p.split(/:(.*)/s, 2) as [string, string?];
    if (seen.has(key)) return undefined;
    seen.add(key);
    if (key === 'top' && INT.test(value)) mods.top = Number(value);
    else if (key === 'cap' && INT.test(value) && Number(value) >= 1) mods.cap = Number(value);
    else if (key === 'dedupe' && /^(0?\.\d+|1(\.0*)?|0)$/.test(value) && Number(value) > 0) mods.dedupe = Number(value);
    else if (key === 'cut' && value === 'sentence') mods.cutSentence = true;
    else if (key === 'order' && value === 'edges') mods.edges = true;
    else return undefined;
  }
  return { base, mods };
}

export function baseName(b: BaseSpec): string {
  switch (b.kind) {
    case 'split':
      return `split:${b.percent}`;
    case 'fusion':
      return `fusion:${b.window}`;
    default:
      return b.kind;
  }
}

/** The canonical spec string (what re-pack writes as a record's `plan`). */
export function canonicalName({ base, mods }: PlanSpec): string {
  const parts = [baseName(base)];
  if (mods.top !== undefined) parts.push(`top:${mods.top}`);
  if (mods.dedupe !== undefined) parts.push(`dedupe:${mods.dedupe}`);
  if (mods.cap !== undefined) parts.push(`cap:${mods.cap}`);
  if (mods.cutSentence) parts.push('cut:sentence');
  if (mods.edges) parts.push('order:edges');
  return parts.join('+');
}

/** A spec with one more modifier (the sweep's k axis); throws when it already has one. */
export function withTop(spec: string, k: number): string {
  const parsed = parsePlanSpec(spec);
  if (!parsed) return `${spec}+top:${k}`; // let parsePlan report it
  if (parsed.mods.top !== undefined) throw new Error(`plan "${spec}" already has top:K; leave out --k or the modifier`);
  return canonicalName({ base: parsed.base, mods: { ...parsed.mods, top: k } });
}
