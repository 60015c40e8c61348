/**
 * Position risk. Liu et al. ("Lost in the Middle: How Language Models Use Long Contexts",
 * TACL 2024) found answer accuracy highest when the relevant passage is first or last among the
 * retrieved passages and lowest in the middle (a U-shaped curve). We flag the passage that
 * carries the reply when it sits in the middle third of a long block of sent passages.
 */
import type { PositionCheck } from './types';

/**
 * Which third a 1-based position falls in: the first ⌊n/3⌋ positions (at least one) are the first
 * third, the last ⌊n/3⌋ (at least one) the last, the rest the middle. Symmetric, so for n = 5 the
 * middle is positions 2–4 and for n = 9 positions 4–6.
 */
export function thirdOf(position: number, of: number): 'first' | 'middle' | 'last' {
  if (!Number.isInteger(position) || position < 1 || position > of) throw new Error(`position ${position} is outside 1..${of}`);
  const edge = Math.max(1, Math.floor(of / 3));
  if (position <= edge) return 'first';
  if (position > of - edge) return 'last';
  return 'middle';
}

export interface SentPassage {
  id: string;
  keptTokens: number;
}

/**
 * @param sent passages as sent, in prompt order (dropped ones left out)
 * @param tokensBefore segment tokens sent before each passage (same order as `sent`)
 */
export function positionCheck(best: string | null, sent: readonly SentPassage[], tokensBefore: readonly number[], longBlock: number): PositionCheck {
  const of = sent.length;
  const long = of >= longBlock;
  const index = best === null ? -1 : sent.findIndex((p) => p.id === best);
  if (index < 0) return { best: null, position: null, of, third: null, tokensBefore: null, long, flagged: false };
  const position = index + 1;
  const third = thirdOf(position, of);
  return { best, position, of, third, tokensBefore: tokensBefore[index] ?? null, long, flagged: long && third === 'middle' };
}
