/**
 * Token-overlap F1 exactly as `f1_score` in the SQuAD v1.1 evaluation script
 * (Rajpurkar et al., 2016): multiset (Counter) overlap of the normalised tokens;
 * 0 when nothing overlaps (so two empty strings also score 0, as in v1.1).
 *
 * Knowledge F1 (Shuster et al., Findings of EMNLP 2021) is this F1 between a reply and the
 * knowledge it should rest on.
 */
import { squadTokens } from './normalize';

export type TokenCounts = Map<string, number>;

export function countTokens(tokens: readonly string[]): TokenCounts {
  const counts: TokenCounts = new Map();
  for (const t of tokens) counts.set(t, (counts.get(t) ?? 0) + 1);
  return counts;
}

/** Precision, recall and F1 of `prediction` against `groundTruth`, both already counted. */
export function overlapF1(prediction: TokenCounts, predictionLength: number, groundTruth: TokenCounts, groundTruthLength: number): { precision: number; recall: number; f1: number; common: number } {
  // `Counter(a) & Counter(b)` keeps min(count) per token; iterate the smaller map.
  const [small, large] = prediction.size <= groundTruth.size ? [prediction, groundTruth] : [groundTruth, prediction];
  let common = 0;
  for (const [token, n] of small) {
    const m = large.get(token);
    if (m !== undefined) common += Math.min(n, m);
  }
  if (common === 0) return { precision: 0, recall: 0, f1: 0, common: 0 };
  const precision = common / predictionLength;
  const recall = common / groundTruthLength;
  return { precision, recall, f1: (2 * precision * recall) / (precision + recall), common };
}

/** SQuAD v1.1 `f1_score(prediction, ground_truth)`. */
export function f1Score(prediction: string, groundTruth: string): number {
  const p = squadTokens(prediction);
  const g = squadTokens(groundTruth);
  return overlapF1(countTokens(p), p.length, countTokens(g), g.length).f1;
}
