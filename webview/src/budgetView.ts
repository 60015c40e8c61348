/** The turn's budget bar (SVG, one rect per part, a tooltip on each) and the same figures as a table. */
import { h, s } from './dom';
import { int, pct } from './format';
import { PART_LABEL, type BudgetBar, type PartKey } from './budget';

const BAR_Y = 6;
const BAR_H = 26;

function x(tokens: number, scale: number): string {
  return `${scale ? (tokens / scale) * 100 : 0}%`;
}

function partTip(key: PartKey, tokens: number, budget: number): string {
  return `${PART_LABEL[key]}: ${int(tokens)} tokens · ${pct(tokens, budget)} of budget`;
}

/** A vertical marker with a label under the bar (budget and window edges). */
function marker(at: number, bar: BudgetBar, label: string, cls: string, anchor: 'start' | 'end'): SVGGElement {
  return s(
    'g',
    { class: `bar-marker ${cls}` },
    s('line', { x1: x(at, bar.scale), x2: x(at, bar.scale), y1: 1, y2: BAR_Y + BAR_H + 4 }),
    s('text', { x: x(at, bar.scale), y: BAR_Y + BAR_H + 17, 'text-anchor': anchor, class: 'bar-label' }, label),
  );
}

export function renderBudgetBar(bar: BudgetBar): SVGSVGElement {
  const summary =
    `Budget use: ${int(bar.used)} of ${int(bar.budget)} tokens (${pct(bar.used, bar.budget)})` +
    (bar.over ? `, over by ${int(bar.over)}` : `, ${int(bar.free)} free`) +
    (bar.spill ? `, ${int(bar.spill)} tokens spilled` : '');
  const svg = s('svg', { class: 'budget-bar', width: '100%', height: BAR_Y + BAR_H + 22, role: 'img', 'aria-label': summary });
  svg.appendChild(s('title', {}, summary));
  for (const p of bar.parts) {
    if (p.drawn <= 0) continue;
    svg.appendChild(
      s(
        'rect',
        { class: `part part-${p.key}`, x: x(p.start, bar.scale), y: BAR_Y, width: x(p.drawn, bar.scale), height: BAR_H, 'data-part': p.key },
        s('title', {}, partTip(p.key, p.tokens, bar.budget)),
      ),
    );
  }
  // The budget edge; the window edge only where something lies beyond it (spill) or the prompt overran it.
  const budgetAnchor = bar.budget / (bar.scale || 1) > 0.75 ? 'end' : 'start';
  svg.appendChild(marker(bar.budget, bar, `budget ${int(bar.budget)}`, 'marker-budget', budgetAnchor));
  const windowEnd = Math.max(bar.window, bar.used);
  if (bar.spill > 0 && windowEnd / (bar.scale || 1) - bar.budget / (bar.scale || 1) > 0.18)
    svg.appendChild(marker(windowEnd, bar, `window ${int(bar.window)}`, 'marker-window', 'end'));
  else if (bar.spill > 0) svg.appendChild(marker(windowEnd, bar, '', 'marker-window', 'end'));
  return svg;
}

/** The accessible twin of the bar: every part with tokens and share of the budget. */
export function renderBudgetTable(bar: BudgetBar): HTMLTableElement {
  const body = h('tbody');
  for (const p of bar.parts) {
    if (p.tokens === 0 && (p.key === 'tool' || p.key === 'spill' || p.key === 'free')) continue;
    body.appendChild(
      h(
        'tr',
        { 'data-part': p.key },
        h('th', { scope: 'row' }, h('span', { class: `swatch part-${p.key}`, 'aria-hidden': 'true' }), PART_LABEL[p.key]),
        h('td', { class: 'num' }, int(p.tokens)),
        // The reserve is outside the budget by definition, so only its share of the window means something.
        h('td', { class: 'num' }, p.key === 'reserve' ? '–' : pct(p.tokens, bar.budget)),
        h('td', { class: 'num' }, pct(p.tokens, bar.window)),
      ),
    );
  }
  if (bar.over > 0)
    body.appendChild(
      h('tr', { class: 'row-over', 'data-part': 'over' }, h('th', { scope: 'row' }, '⚠ over budget'), h('td', { class: 'num' }, int(bar.over)), h('td', { class: 'num' }, pct(bar.over, bar.budget)), h('td', { class: 'num' }, pct(bar.over, bar.window))),
    );
  return h(
    'table',
    { class: 'budget-table', 'aria-label': 'Budget by kind' },
    h('thead', {}, h('tr', {}, h('th', { scope: 'col' }, 'part'), h('th', { scope: 'col', class: 'num' }, 'tokens'), h('th', { scope: 'col', class: 'num' }, '% of budget'), h('th', { scope: 'col', class: 'num' }, '% of window'))),
    body,
    h('tfoot', {}, h('tr', {}, h('th', { scope: 'row' }, 'used / budget'), h('td', { class: 'num' }, `${int(bar.used)} / ${int(bar.budget)}`), h('td', { class: 'num' }, pct(bar.used, bar.budget)), h('td', { class: 'num' }, pct(bar.used, bar.window)))),
  );
}
