/**
 * Passage placement shared by the composed plans: which passages are candidates (`top:K`,
 * `dedupe:R`), how long each may be (`cap:N`, `cut:sentence`), and placing them on the meter.
 */
import type { Segment } from '../../log/types';
import type { CutPoint } from '../../audit/types';
import { shingleSet } from '../../analysis/shingles';
import { splitSentences } from '../../analysis/sentences';
import { cleanPrefix, type PromptMeter } from '../meter';
import { MIN_CLIP_TOKENS, passagesByRank, type PlanResult } from '../plans';
import type { Modifiers } from './spec';

/**
 * Shingle size for `dedupe:R`: 3 words, the analysis default (`DEFAULT_ANALYSIS_SETTINGS.shingleWords`),
 * so a plan drops exactly the pairs the near-duplicate check reports at the same threshold.
 */
export const DEDUPE_SHINGLE_WORDS = 3;

/** Why a passage was left out before packing (written as `reason` on the re-packed `sent` entry). */
export type DropReason = 'top' | 'duplicate' | 'no-sentence-end' | 'no-window';

export interface ComposedResult extends PlanResult {
  reasons: Map<number, DropReason>;
}

/** Jaccard of two shingle sets: Broder's resemblance r_w (Option B), as `analysis/shingles.resemblance`. */
export function setResemblance(a: ReadonlySet<string>, b: ReadonlySet<string>): number {
  const [small, large] = a.size <= b.size ? [a, b] : [b, a];
  let common = 0;
  for (const s of small) if (large.has(s)) common++;
  const union = a.size + b.size - common;
  return union === 0 ? 0 : common / union;
}

/**
 * Candidates in rank order: the first K by rank (`top:K`), then — walking best first — each
 * passage whose resemblance to an earlier surviving candidate is ≥ R is left out (`dedupe:R`).
 */
export function candidatePassages(segments: readonly Segment[], mods: Modifiers, reasons: Map<number, DropReason>): number[] {
  let order = passagesByRank(segments);
  if (mods.top !== undefined) {
    for (const i of order.slice(mods.top)) reasons.set(i, 'top');
    order = order.slice(0, mods.top);
  }
  if (mods.dedupe !== undefined) {
    const r = mods.dedupe;
    const kept: { i: number; set: Set<string> }[] = [];
    for (const i of order) {
      const set = shingleSet(segments[i]!.text, DEDUPE_SHINGLE_WORDS);
      if (kept.some((k) => setResemblance(k.set, set) >= r)) reasons.set(i, 'duplicate');
      else kept.push({ i, set });
    }
    order = kept.map((k) => k.i);
  }
  return order;
}

/** The largest sentence end (trimmed, as a UTF-16 offset) at or before `chars`, short of the whole text. */
export function lastSentenceEnd(text: string, chars: number): number | undefined {
  let best: number | undefined;
  for (const s of splitSentences(text, 'en')) {
    if (s.end > chars || s.end >= text.length) break;
    best = s.end;
  }
  return best;
}

/** Places passages on the meter under the modifiers' length rules. */
export class PassagePlacer {
  private readonly capped = new Map<number, { chars: number; cut?: CutPoint } | null>();

  constructor(
    private readonly meter: PromptMeter,
    private readonly mods: Modifiers,
    private readonly cuts: Map<number, CutPoint>,
    private readonly reasons: Map<number, DropReason>,
  ) {}

  /** Characters passage i may have at most (whole, or its `cap:N` prefix); null = nothing may be sent. */
  limit(i: number): { chars: number; cut?: CutPoint } | null {
    let c = this.capped.get(i);
    if (c !== undefined) return c;
    const text = this.meter.segments[i]!.text;
    c = { chars: text.length };
    const cap = this.mods.cap;
    if (cap !== undefined && this.meter.tokens[i]! > cap) {
      const enc = this.meter.acct.loadedEncoder(this.meter.encoding);
      const p = cleanPrefix(enc, text, this.meter.acct.encode(this.meter.encoding, text), cap);
      c = { chars: p.chars, cut: { token: p.tokens, char: p.chars } };
      if (this.mods.cutSentence) {
        const end = lastSentenceEnd(text, p.chars);
        c = end === undefined ? null : { chars: end, cut: { token: this.meter.acct.count(this.meter.encoding, text.slice(0, end)), char: end } };
      }
      if (c === null || c.chars === 0) {
        c = null;
        this.reasons.set(i, 'no-sentence-end');
      }
    }
    this.capped.set(i, c);
    return c;
  }

  /** Includes passage i at its allowed length if the prompt then fits `budget`. */
  tryWhole(i: number, budget: number): boolean {
    const c = this.limit(i);
    if (!c) return false;
    this.meter.set(i, c.chars);
    if (this.meter.used() <= budget) {
      if (c.cut) this.cuts.set(i, c.cut);
      return true;
    }
    this.meter.exclude(i);
    return false;
  }

  /** Clips passage i to the longest prefix that fits (≥ 32 tokens; at a sentence end with `cut:sentence`). */
  clip(i: number, budget: number, minTokens = MIN_CLIP_TOKENS): boolean {
    const c = this.limit(i);
    if (!c) return false;
    const cut = this.meter.clipToFit(i, budget, minTokens);
    if (!cut) return false;
    let chars = Math.min(cut.char, c.chars);
    if (this.mods.cutSentence) {
      const text = this.meter.segments[i]!.text;
      const end = lastSentenceEnd(text, chars);
      if (end === undefined) {
        this.meter.exclude(i);
        return false;
      }
      chars = end;
    }
    if (chars !== cut.char) {
      this.meter.set(i, chars);
      const tokens = this.meter.acct.count(this.meter.encoding, this.meter.segments[i]!.text.slice(0, chars));
      if (tokens < minTokens || this.meter.used() > budget) {
        this.meter.exclude(i);
        return false;
      }
      this.cuts.set(i, { token: tokens, char: chars });
    } else this.cuts.set(i, cut);
    return true;
  }

  /** Whole while they fit; the first that does not is clipped (or dropped); all after it dropped. */
  placeInOrder(order: readonly number[], budget: number): void {
    for (const i of order) {
      if (this.tryWhole(i, budget)) continue;
      if (!this.limit(i)) continue; // nothing of it may be sent: not the passage that stops the run
      this.clip(i, budget);
      break;
    }
  }
}

/**
 * `order:edges` positions: with passages sorted best first p1, p2, p3, …, the prompt's passage
 * slots (in prompt order) receive p1, p3, p5, …, p6, p4, p2 — strongest at both ends.
 * Returns the new segment order (indices into `segments`).
 */
export function edgesOrder(segments: readonly Segment[]): number[] {
  const slots: number[] = [];
  segments.forEach((s, i) => {
    if (s.kind === 'passage') slots.push(i);
  });
  const byRank = passagesByRank(segments);
  const arranged: number[] = new Array<number>(byRank.length);
  let front = 0;
  let back = byRank.length - 1;
  byRank.forEach((p, n) => {
    if (n % 2 === 0) arranged[front++] = p;
    else arranged[back--] = p;
  });
  const order = segments.map((_, i) => i);
  slots.forEach((slot, n) => {
    order[slot] = arranged[n]!;
  });
  return order;
}
