/**
 * Which passages a turn's evidence is: the reviewer-marked `evidence` ids, or where none is marked,
 * the passage that best supports the reply — highest SQuAD v1.1 token-overlap F1 between the reply
 * and the passage's whole text (Rajpurkar et al., 2016, via analysis/f1; ties: better rank, then
 * prompt order; none when every F1 is 0).
 */
import type { LogRecord } from '../log/types';
import { overlapF1 } from '../analysis/f1';
import { joinedSquad, plainTexts, sharedTexts, type SquadCounts } from '../analysis/textfacts';

export type EvidenceBasis = 'evidence' | 'best-passage';

/**
 * `reply`: the reply's SQuAD counts when the caller already has them (a comparison needs them three
 * times per record). Passage texts recur across records: their counts come from the shared memo.
 */
export function evidenceOf(record: LogRecord, reply: SquadCounts = replyCounts(record.reply)): { basis: EvidenceBasis; ids: string[] } | null {
  const passages = record.segments.filter((s) => s.kind === 'passage');
  const passageIds = new Set(passages.map((p) => p.id));
  if (Array.isArray(record.evidence)) {
    const ids = record.evidence.filter((x): x is string => typeof x === 'string' && passageIds.has(x));
    if (ids.length > 0) return { basis: 'evidence', ids };
  }
  if (reply.length === 0) return null;
  let best: { id: string; f1: number; rank: number; at: number } | null = null;
  passages.forEach((p, at) => {
    const pt = sharedTexts.squad(p.text);
    const f1 = overlapF1(reply.counts, reply.length, pt.counts, pt.length).f1;
    const rank = typeof p.rank === 'number' ? p.rank : Number.POSITIVE_INFINITY;
    if (f1 > 0 && (!best || f1 > best.f1 || (f1 === best.f1 && (rank < best.rank || (rank === best.rank && at < best.at))))) best = { id: p.id, f1, rank, at };
  });
  return best ? { basis: 'best-passage', ids: [(best as { id: string }).id] } : null;
}

/** SQuAD counts of a reply (a one-off text: not kept in the shared memo). */
export function replyCounts(reply: unknown): SquadCounts {
  return plainTexts.squad(typeof reply === 'string' ? reply : '');
}

/** SQuAD counts of a sent passage text: whole passages recur (memo), clipped prefixes rarely do. */
export function passageCounts(text: string, whole: boolean): SquadCounts {
  return whole ? sharedTexts.squad(text) : plainTexts.squad(text);
}

/**
 * Reply support of a packing: the share of the reply's SQuAD-normalised tokens (as a multiset) that
 * occur in the text of the passages that were sent — the precision side of token-overlap F1, in the
 * spirit of K-Precision (Adlakha et al., TACL 2024). null when the reply is empty.
 *
 * The passages' tokens are those of their texts joined with spaces (`joinedSquad`).
 */
export function replySupportOf(reply: SquadCounts, sent: readonly SquadCounts[]): number | null {
  if (reply.length === 0) return null;
  const passages = joinedSquad(sent);
  if (passages.length === 0) return 0;
  return overlapF1(reply.counts, reply.length, passages.counts, passages.length).precision;
}

/** Reply support from texts (see replySupportOf). */
export function replySupport(reply: string | undefined, sentPassageTexts: readonly string[]): number | null {
  return replySupportOf(replyCounts(reply), sentPassageTexts.map((t) => plainTexts.squad(t)));
}
