/** Hover wording for a segment's `text` value: tokens, fate, cut point, and which side of the cut the pointer is on. */
import type { SegmentLedger } from '../audit/types';
import { fmt, pct } from './format';

export interface HoverRow {
  label: string;
  /** Plain text; the host renders it as text, never as markdown (ids are untrusted). */
  value: string;
}

/**
 * @param charIndex decoded character under the pointer, or undefined.
 * @param textLength decoded length of the segment's text.
 */
export function segmentHoverRows(seg: SegmentLedger, budget: number, textLength: number, charIndex?: number): HoverRow[] {
  const rows: HoverRow[] = [{ label: 'Segment', value: `${seg.id} (${seg.kind}, ${seg.role}${seg.rank !== undefined ? `, rank ${seg.rank}` : ''})` }];
  rows.push({ label: 'Tokens', value: `${fmt(seg.tokens)} (${fmt(textLength)} characters)` });
  if (seg.fate === 'kept') rows.push({ label: 'Fate', value: `kept whole · ${pct(budget > 0 ? seg.keptTokens / budget : 0)} of budget` });
  else if (seg.fate === 'dropped') rows.push({ label: 'Fate', value: `dropped · all ${fmt(seg.tokens)} tokens spilled` });
  else {
    rows.push({ label: 'Fate', value: `clipped · ${fmt(seg.keptTokens)} kept, ${fmt(seg.tokens - seg.keptTokens)} spilled` });
    if (seg.cut) {
      rows.push({ label: 'Cut point', value: `after token ${fmt(seg.cut.token)}, at character ${fmt(seg.cut.char)} of ${fmt(textLength)}` });
      if (charIndex !== undefined)
        rows.push({ label: 'Here', value: charIndex < seg.cut.char ? 'in the kept part' : 'in the spilled part (not sent)' });
    }
  }
  if (seg.planFate && seg.planFate !== seg.fate) rows.push({ label: 'Plan', value: `the packing plan would have ${seg.planFate} it` });
  return rows;
}
