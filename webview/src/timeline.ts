/**
 * The conversation timeline: per turn, kept tokens stacked by kind (plus framing & joins) against
 * the budget line, the selected turn marked. Hand-drawn SVG (createElementNS + attributes + classes)
 * so it runs under the webview's strict CSP without a chart library. Each turn is a button: click,
 * or arrow keys to move and Enter/Space to select.
 */
import type { TurnRow } from '../../extension/protocol/messages';
import { h, s } from './dom';
import { int, pct } from './format';
import { KIND_ORDER, PART_LABEL, type PartKey } from './budget';

const H = 190;
const TOP = 14;
const BOTTOM = 150;
const LEFT = 46;

/** Round step for about `n` axis ticks (1, 2, 5 × 10^k). */
export function niceStep(max: number, n = 4): number {
  if (max <= 0) return 1;
  const raw = max / n;
  const p = 10 ** Math.floor(Math.log10(raw));
  for (const m of [1, 2, 5, 10]) if (m * p >= raw) return m * p;
  return 10 * p;
}

function short(n: number): string {
  return n >= 10_000 ? `${Math.round(n / 1000)}k` : n >= 1000 ? `${(n / 1000).toFixed(n % 1000 ? 1 : 0)}k` : String(n);
}

export function stackOf(row: TurnRow): Array<[PartKey, number]> {
  const out: Array<[PartKey, number]> = KIND_ORDER.map((k) => [k, Math.max(0, row.byKind[k] ?? 0)] as [PartKey, number]);
  out.push(['framing', Math.max(0, row.framing + row.joins)]);
  return out;
}

function turnLabel(r: TurnRow): string {
  const state = r.state === 'ok' ? '' : r.state === 'over-budget' ? ', over budget' : ', over budget before passages';
  const lost = r.rank1Fate && r.rank1Fate !== 'kept' ? `, rank-1 passage ${r.rank1Fate}` : '';
  return `Turn ${r.turn}: ${int(r.used)} of ${int(r.budget)} tokens (${pct(r.used, r.budget)}), history ${int(r.byKind.history ?? 0)}, passages ${int(r.byKind.passage ?? 0)}${state}${lost}`;
}

export interface TimelineOptions {
  conversation: string;
  rows: readonly TurnRow[];
  selectedLine?: number;
  onSelect(line: number): void;
}

export function renderTimeline(o: TimelineOptions): HTMLElement {
  const rows = [...o.rows].sort((a, b) => a.turn - b.turn || a.line - b.line);
  const n = Math.max(1, rows.length);
  const step = Math.max(10, Math.min(44, 620 / n));
  // Right margin holds the budget label, clear of the bars.
  const width = LEFT + n * step + 78;
  const yMax = Math.max(1, ...rows.map((r) => Math.max(r.budget, r.used))) * 1.06;
  const y = (v: number): number => BOTTOM - (v / yMax) * (BOTTOM - TOP);
  const svg = s('svg', { class: 'timeline', width, height: H, viewBox: `0 0 ${width} ${H}`, role: 'group', 'aria-label': `Conversation ${o.conversation}: kept tokens by kind per turn against the budget` });

  const tick = niceStep(yMax);
  for (let v = 0; v <= yMax; v += tick) {
    svg.appendChild(s('line', { class: 'grid', x1: LEFT, x2: LEFT + n * step, y1: y(v), y2: y(v) }));
    svg.appendChild(s('text', { class: 'axis', x: LEFT - 5, y: y(v) + 4, 'text-anchor': 'end' }, short(v)));
  }
  const barW = Math.max(4, step * 0.72);
  const labelEvery = Math.ceil(22 / step);
  const turns: SVGGElement[] = [];
  rows.forEach((r, i) => {
    const cx = LEFT + i * step + step / 2;
    const selected = r.line === o.selectedLine;
    const g = s('g', { class: `tl-turn${selected ? ' selected' : ''}${r.state !== 'ok' ? ' over' : ''}`, role: 'button', tabindex: -1, 'aria-pressed': selected ? 'true' : 'false', 'aria-label': turnLabel(r), 'data-line': r.line });
    g.appendChild(s('title', {}, turnLabel(r)));
    if (selected) g.appendChild(s('rect', { class: 'tl-selected', x: cx - step / 2 + 1, y: TOP - 10, width: step - 2, height: BOTTOM - TOP + 26 }));
    g.appendChild(s('rect', { class: 'tl-hit', x: cx - step / 2, y: TOP, width: step, height: BOTTOM - TOP + 22 }));
    let acc = 0;
    for (const [key, v] of stackOf(r)) {
      if (v <= 0) continue;
      g.appendChild(s('rect', { class: `part part-${key}`, x: cx - barW / 2, y: y(acc + v), width: barW, height: y(acc) - y(acc + v), 'data-part': key }));
      acc += v;
    }
    if (r.state !== 'ok') g.appendChild(s('text', { class: 'tl-flag', x: cx, y: y(acc) - 3, 'text-anchor': 'middle' }, '⚠'));
    if (selected || i % labelEvery === 0 || i === rows.length - 1)
      g.appendChild(s('text', { class: `axis tl-x${selected ? ' selected' : ''}`, x: cx, y: BOTTOM + 14, 'text-anchor': 'middle' }, r.turn));
    if (selected) g.appendChild(s('path', { class: 'tl-pointer', d: `M${cx - 5} ${BOTTOM + 26} L${cx + 5} ${BOTTOM + 26} L${cx} ${BOTTOM + 19} Z` }));
    g.addEventListener('click', () => o.onSelect(r.line));
    turns.push(g);
    svg.appendChild(g);
  });
  // The budget as a step line (it can change between turns when the model changes).
  let d = '';
  rows.forEach((r, i) => {
    const x0 = LEFT + i * step;
    d += `${i === 0 ? 'M' : 'L'}${x0} ${y(r.budget)} L${x0 + step} ${y(r.budget)} `;
  });
  if (d) svg.appendChild(s('path', { class: 'budget-line', d: d.trim() }));
  const last = rows[rows.length - 1];
  if (last) svg.appendChild(s('text', { class: 'axis budget-label', x: LEFT + n * step + 4, y: y(last.budget) + 4 }, `budget ${int(last.budget)}`));
  svg.appendChild(s('text', { class: 'axis', x: LEFT, y: H - 4 }, 'turn →'));

  // Roving focus: the selected turn (or the first) holds the tab stop.
  const focusIdx = Math.max(0, rows.findIndex((r) => r.line === o.selectedLine));
  if (turns[focusIdx]) turns[focusIdx]!.setAttribute('tabindex', '0');
  svg.addEventListener('keydown', (e) => {
    const cur = turns.indexOf((e.target as Element).closest('g.tl-turn') as SVGGElement);
    if (cur < 0) return;
    let next = cur;
    if (e.key === 'ArrowRight' || e.key === 'ArrowDown') next = Math.min(turns.length - 1, cur + 1);
    else if (e.key === 'ArrowLeft' || e.key === 'ArrowUp') next = Math.max(0, cur - 1);
    else if (e.key === 'Home') next = 0;
    else if (e.key === 'End') next = turns.length - 1;
    else if (e.key === 'Enter' || e.key === ' ') {
      e.preventDefault();
      o.onSelect(rows[cur]!.line);
      return;
    } else return;
    e.preventDefault();
    turns[cur]!.setAttribute('tabindex', '-1');
    turns[next]!.setAttribute('tabindex', '0');
    turns[next]!.focus();
  });

  const legend = h('ul', { class: 'legend', 'aria-label': 'Legend' });
  for (const key of [...KIND_ORDER, 'framing'] as PartKey[]) {
    if (key === 'tool' && !rows.some((r) => (r.byKind.tool ?? 0) > 0)) continue;
    legend.appendChild(h('li', {}, h('span', { class: `swatch part-${key}`, 'aria-hidden': 'true' }), PART_LABEL[key]));
  }
  legend.appendChild(h('li', {}, h('span', { class: 'swatch swatch-line', 'aria-hidden': 'true' }), 'budget'));
  return h('div', { class: 'timeline-wrap' }, h('div', { class: 'timeline-scroll' }, svg), legend);
}
