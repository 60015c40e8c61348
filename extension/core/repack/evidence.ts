/**
 * Which passages a turn's evidence is: the reviewer-marked `evidence` ids, or where none is marked,
 * the passage that best supports the reply — highest SQuAD v1.1 token-overlap F1 between the reply
 * and the passage's whole text (Rajpurkar et al., 2016, via analysis/f1; ties: better rank, then
 * prompt order; none when every F1 is 0).
 */
import type { LogRecord } from '../log/types';
import { countTokens, overlapF1 } from '../analysis/f1';
import { squadTokens } from '../analysis/normalize';

export type EvidenceBasis = 'evidence' | 'best-passage';

export function evidenceOf(record: LogRecord): { basis: EvidenceBasis; ids: string[] } | null {
  const passages = record.segments.filter((s) => s.kind === 'passage');
  const passageIds = new Set(passages.map((p) => p.id));
  if (Array.isArray(record.evidence)) {
    const ids = record.evidence.filter((x): x is string => typeof x === 'string' && passageIds.has(x));
    if (ids.length > 0) return { basis: 'evidence', ids };
  }
  const reply = typeof record.reply === 'string' ? record.reply : '';
  const rt = squadTokens(reply);
  if (rt.length === 0) return null;
  const rc = countTokens(rt);
  let best: { id: string; f1: number; rank: number; at: number } | null = null;
  passages.forEach((p, at) => {
    const pt = squadTokens(p.text);
    const f1 = overlapF1(rc, rt.length, countTokens(pt), pt.length).f1;
    const rank = typeof p.rank === 'number' ? p.rank : Number.POSITIVE_INFINITY;
    if (f1 > 0 && (!best || f1 > best.f1 || (f1 === best.f1 && (rank < best.rank || (rank === best.rank && at < best.at))))) best = { id: p.id, f1, rank, at };
  });
  return best ? { basis: 'best-passage', ids: [(best as { id: string }).id] } : null;
}

/**
 * Reply support of a packing: the share of the reply's SQuAD-normalised tokens (as a multiset) that
 * occur in the text of the passages that were sent — the precision side of token-overlap F1, in the
 * spirit of K-Precision (Adlakha et al., TACL 2024). null when the reply is empty.
 */
export function replySupport(reply: string | undefined, sentPassageTexts: readonly string[]): number | null {
  const rt = squadTokens(reply ?? '');
  if (rt.length === 0) return null;
  const pt = squadTokens(sentPassageTexts.join(' '));
  if (pt.length === 0) return 0;
  return overlapF1(countTokens(rt), rt.length, countTokens(pt), pt.length).precision;
}
