/**
 * One segment's text split at its cut point: the kept part, a visible cut marker carrying the token
 * counts on either side, and the spilled part. `cut.char` is the UTF-16 offset from the core, so
 * `text.slice(0, cut.char)` is exactly what was sent. Text goes in as text nodes only.
 */
import type { SegmentView } from '../../extension/protocol/messages';
import { h } from './dom';
import { int, score } from './format';
import { fateBadge } from './fate';

/** Most token spans rendered for one passage; beyond it boundaries are not drawn (said in the view). */
export const MAX_BOUNDARY_SPANS = 20_000;

export interface Split {
  /** UTF-16 offset where the kept part ends. */
  char: number;
  keptTokens: number;
  spilledTokens: number;
}

export function splitOf(seg: SegmentView): Split {
  const spilledTokens = seg.tokens - seg.keptTokens;
  if (seg.fate === 'dropped') return { char: 0, keptTokens: 0, spilledTokens: seg.tokens };
  if (seg.fate === 'clipped' && seg.cut) return { char: Math.max(0, Math.min(seg.text.length, seg.cut.char)), keptTokens: seg.cut.token, spilledTokens };
  return { char: seg.text.length, keptTokens: seg.keptTokens, spilledTokens };
}

/** Text between `from` and `to` as alternating token spans at the given boundaries, or one text node. */
function tokenRuns(text: string, from: number, to: number, cuts: readonly number[] | undefined, parity: { n: number }): Node[] {
  if (from >= to) return [];
  if (!cuts) return [document.createTextNode(text.slice(from, to))];
  const nodes: Node[] = [];
  let at = from;
  for (const b of cuts) {
    if (b <= at) continue;
    if (b >= to) break;
    nodes.push(h('span', { class: `tok tok-${parity.n++ % 2}` }, text.slice(at, b)));
    at = b;
  }
  nodes.push(h('span', { class: `tok tok-${parity.n++ % 2}` }, text.slice(at, to)));
  return nodes;
}

export interface PassageViewOptions {
  segment: SegmentView;
  /** UTF-16 token boundary offsets from the host, when "show token boundaries" is on. */
  boundaries?: readonly number[];
  boundariesPending?: boolean;
}

export function renderPassage(o: PassageViewOptions): HTMLElement {
  const seg = o.segment;
  const split = splitOf(seg);
  const text = seg.text;
  let cuts: number[] | undefined;
  let note: string | undefined;
  if (o.boundaries) {
    cuts = Array.from(new Set(o.boundaries.filter((b) => Number.isInteger(b) && b > 0 && b < text.length))).sort((a, b) => a - b);
    if (cuts.length + 1 > MAX_BOUNDARY_SPANS) {
      note = `${int(cuts.length + 1)} tokens: too many to mark; showing plain text.`;
      cuts = undefined;
    } else note = `${int(cuts.length + 1)} tokens marked (alternating shading).`;
  } else if (o.boundariesPending) note = 'Asking the host for token boundaries…';

  const parity = { n: 0 };
  const kept = h('span', { class: 'text-kept', 'data-part': 'kept' }, ...tokenRuns(text, 0, split.char, cuts, parity));
  const spilled = h('span', { class: 'text-spilled', 'data-part': 'spilled' }, ...tokenRuns(text, split.char, text.length, cuts, parity));
  const cutLabel =
    seg.fate === 'dropped'
      ? `✕ dropped: nothing sent · ${int(split.spilledTokens)} tokens spilled ▼`
      : seg.fate === 'clipped'
        ? `▲ ${int(split.keptTokens)} tokens kept · ✂ cut at char ${int(split.char)} · ${int(split.spilledTokens)} tokens spilled ▼`
        : `▲ all ${int(split.keptTokens)} tokens kept`;
  const cutMark = h('span', { class: `cut-mark cut-${seg.fate}`, role: 'separator', 'aria-label': `Cut point: ${int(split.keptTokens)} tokens kept before, ${int(split.spilledTokens)} tokens spilled after` }, cutLabel);

  const facts = [
    `${seg.kind}`,
    seg.rank !== undefined ? `rank ${seg.rank}` : null,
    seg.score !== undefined ? `score ${score(seg.score)}` : null,
    `${int(seg.tokens)} tokens`,
    seg.source ? `source ${seg.source}` : null,
    seg.date ? `dated ${seg.date}` : null,
  ].filter((f): f is string => f !== null);

  return h(
    'div',
    { class: 'passage', 'data-segment': seg.id },
    h('div', { class: 'passage-head' }, h('strong', { class: 'seg-id' }, seg.id), ' ', fateBadge(seg.fate, seg.planFate), h('span', { class: 'muted' }, ` · ${facts.join(' · ')}`)),
    h('div', { class: 'passage-text', role: 'region', 'aria-label': `Text of ${seg.id}` }, kept, cutMark, spilled),
    note ? h('p', { class: 'muted boundary-note', role: 'status' }, note) : null,
  );
}
