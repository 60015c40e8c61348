/** Log overview: the counts that matter, the distribution of budget use, and the worst turns to jump to. */
import type { LogOverview, TurnRow } from '../../extension/protocol/messages';
import { h, s } from './dom';
import { int, pct } from './format';

export function bucketLabel(i: number, n: number): string {
  return i === n - 1 ? `≥${i * 10}%` : `${i * 10}–${(i + 1) * 10}%`;
}

function histogram(counts: readonly number[]): SVGSVGElement {
  const n = counts.length;
  const W = 440;
  const HH = 130;
  const base = 100;
  const step = (W - 10) / Math.max(1, n);
  const max = Math.max(1, ...counts);
  const total = counts.reduce((a, b) => a + b, 0);
  const svg = s('svg', { class: 'histogram', width: '100%', viewBox: `0 0 ${W} ${HH}`, role: 'img', 'aria-label': `Budget use of ${int(total)} turns: ${counts.map((c, i) => `${bucketLabel(i, n)} ${int(c)}`).join(', ')}` });
  svg.appendChild(s('line', { class: 'grid', x1: 5, x2: W - 5, y1: base, y2: base }));
  counts.forEach((c, i) => {
    const hgt = (c / max) * (base - 16);
    const x0 = 5 + i * step;
    const over = i === n - 1;
    // The last bucket holds full turns (exactly 100%) as well as over-budget ones: marked, not alarmed.
    svg.appendChild(s('rect', { class: `hist-bar${over ? ' hist-full' : ''}`, x: x0 + 2, y: base - hgt, width: step - 4, height: hgt }, s('title', {}, `${bucketLabel(i, n)} of budget${over ? ' (full or over)' : ''}: ${int(c)} turns (${pct(c, total)})`)));
    if (c > 0) svg.appendChild(s('text', { class: 'axis', x: x0 + step / 2, y: base - hgt - 3, 'text-anchor': 'middle' }, int(c)));
    svg.appendChild(s('text', { class: 'axis', x: x0 + step / 2, y: base + 13, 'text-anchor': 'middle' }, over ? '100+' : String(i * 10)));
  });
  svg.appendChild(s('text', { class: 'axis', x: W / 2, y: HH - 2, 'text-anchor': 'middle' }, '% of budget used'));
  return svg;
}

export function worstReason(r: TurnRow): string {
  const parts: string[] = [];
  if (r.state === 'over-before-passages') parts.push('over budget before passages');
  else if (r.state === 'over-budget') parts.push(`over by ${int(r.used - r.budget)}`);
  if (r.rank1Fate && r.rank1Fate !== 'kept') parts.push(`rank-1 ${r.rank1Fate}`);
  if (r.clipped) parts.push(`${r.clipped} clipped`);
  if (r.dropped) parts.push(`${r.dropped} dropped`);
  return parts.join(' · ') || `${pct(r.used, r.budget)} used`;
}

export interface OverviewOptions {
  overview: LogOverview;
  onJump(line: number): void;
}

export function renderOverview(o: OverviewOptions): HTMLElement {
  const ov = o.overview;
  const stat = (value: number, label: string, warn: boolean): HTMLElement =>
    h('div', { class: `stat${warn && value > 0 ? ' stat-warn' : ''}` }, h('dt', {}, label), h('dd', {}, warn && value > 0 ? h('span', { class: 'fate-icon', 'aria-hidden': 'true' }, '⚠ ') : null, int(value)));
  const stats = h(
    'dl',
    { class: 'stats', 'aria-label': 'Log counts' },
    stat(ov.turns, 'turns', false),
    stat(ov.conversations, 'conversations', false),
    stat(ov.overBudget, 'over-budget turns', true),
    stat(ov.overBeforePassages, 'over before passages', true),
    stat(ov.rank1Clipped, 'rank-1 clipped', true),
    stat(ov.rank1Dropped, 'rank-1 dropped', true),
    stat(ov.malformed, 'malformed lines', true),
    stat(ov.spill, 'tokens spilled', false),
  );
  const worst = h('ol', { class: 'worst', 'aria-label': 'Worst turns' });
  for (const r of ov.worst) {
    const b = h('button', { type: 'button', class: 'link-button', 'data-line': r.line }, `line ${int(r.line)} · ${r.conversation} turn ${r.turn}`, h('span', { class: 'muted' }, ` — ${worstReason(r)}`));
    b.addEventListener('click', () => o.onJump(r.line));
    worst.appendChild(h('li', {}, b));
  }
  return h(
    'div',
    { class: 'overview' },
    stats,
    h('h3', {}, 'Budget use'),
    histogram(ov.useHistogram),
    h('h3', {}, 'Worst turns'),
    ov.worst.length ? worst : h('p', { class: 'muted' }, 'No turn over budget or with a lost rank-1 passage.'),
  );
}
