/**
 * The Sweep view: evidence retention and tokens per turn for each budget × plan (× k), as two SVG
 * line charts (one line per plan, labelled at its end, points with tooltips; geometry and colour
 * classes as attributes, no inline style) and the same figures as an accessible table.
 */
import type { HostMessage, SweepCell, SweepView } from '../../extension/protocol/messages';
import { h, s, setChildren } from './dom';
import { int, ratioPct } from './format';

export const seriesName = (c: Pick<SweepCell, 'plan' | 'k'>): string => (c.k === null ? c.plan : `${c.plan} · k=${c.k}`);

interface Series {
  name: string;
  cells: SweepCell[];
}

export function sweepSeries(v: SweepView): Series[] {
  const by = new Map<string, SweepCell[]>();
  for (const c of v.cells) {
    const k = seriesName(c);
    (by.get(k) ?? by.set(k, []).get(k)!).push(c);
  }
  return [...by].map(([name, cells]) => ({ name, cells: cells.sort((a, b) => a.budget - b.budget) }));
}

const W = 460;
const H = 200;
const PAD = { left: 48, right: 130, top: 12, bottom: 34 };

function lineChart(label: string, v: SweepView, value: (c: SweepCell) => number | null, max: number, tick: (y: number) => string): SVGSVGElement {
  const series = sweepSeries(v);
  const budgets = v.budgets;
  const x = (b: number): number => PAD.left + (budgets.length <= 1 ? 0.5 : budgets.indexOf(b) / (budgets.length - 1)) * (W - PAD.left - PAD.right);
  const y = (val: number): number => PAD.top + (1 - (max > 0 ? val / max : 0)) * (H - PAD.top - PAD.bottom);
  const svg = s('svg', { class: 'sweep-chart', width: '100%', viewBox: `0 0 ${W} ${H}`, role: 'img', 'aria-label': `${label} per budget and plan; the table below has every figure` });
  for (const f of [0, 0.5, 1]) {
    svg.appendChild(s('line', { class: 'grid', x1: PAD.left, x2: W - PAD.right, y1: y(f * max), y2: y(f * max) }));
    svg.appendChild(s('text', { class: 'axis', x: PAD.left - 4, y: y(f * max) + 4, 'text-anchor': 'end' }, tick(f * max)));
  }
  for (const b of budgets) svg.appendChild(s('text', { class: 'axis', x: x(b), y: H - PAD.bottom + 14, 'text-anchor': 'middle' }, int(b)));
  svg.appendChild(s('text', { class: 'axis', x: (PAD.left + W - PAD.right) / 2, y: H - 4, 'text-anchor': 'middle' }, 'budget (tokens)'));
  const labels: { y: number; x: number; cls: string; name: string }[] = [];
  series.forEach((se, i) => {
    const pts = se.cells.map((c) => ({ c, v: value(c) })).filter((p): p is { c: SweepCell; v: number } => p.v !== null);
    if (pts.length === 0) return;
    const cls = `sweep-series series-${i % 6}`;
    svg.appendChild(s('polyline', { class: `${cls} sweep-line`, points: pts.map((p) => `${x(p.c.budget).toFixed(1)},${y(p.v).toFixed(1)}`).join(' '), fill: 'none' }));
    for (const p of pts) svg.appendChild(s('circle', { class: `${cls} sweep-point`, cx: x(p.c.budget).toFixed(1), cy: y(p.v).toFixed(1), r: 3 }, s('title', {}, `${se.name}, budget ${int(p.c.budget)}: ${tick(p.v)}`)));
    const last = pts[pts.length - 1]!;
    labels.push({ x: x(last.c.budget) + 6, y: y(last.v) + 4, cls, name: se.name });
  });
  // End labels of lines that finish close together are pushed apart (12 px) so each stays legible.
  labels.sort((a, b) => a.y - b.y);
  for (let i = 1; i < labels.length; i++) labels[i]!.y = Math.max(labels[i]!.y, labels[i - 1]!.y + 12);
  for (const l of labels) svg.appendChild(s('text', { class: `${l.cls} series-label`, x: l.x, y: l.y.toFixed(1) }, l.name));
  return svg;
}

export function renderSweepTable(v: SweepView): HTMLTableElement {
  const heads = ['Budget', 'Plan', 'k', 'Evidence kept', 'Evidence whole', 'Tokens / turn', 'Rank-1 cut', 'Over before passages', ...(v.priced ? ['Cost / 1,000 turns'] : [])];
  return h(
    'table',
    { class: 'sweep-table', 'aria-label': 'Sweep results' },
    h('caption', { class: 'muted' }, `${int(v.records)} records${v.malformed ? `, ${int(v.malformed)} malformed lines skipped` : ''}; evidence kept = tokens of evidence passages sent ÷ their tokens.`),
    h('thead', {}, h('tr', {}, ...heads.map((x) => h('th', { scope: 'col' }, x)))),
    h(
      'tbody',
      {},
      ...v.cells.map((c) =>
        h(
          'tr',
          {},
          h('td', { class: 'num' }, int(c.budget)),
          h('td', {}, c.plan),
          h('td', { class: 'num' }, c.k === null ? '—' : String(c.k)),
          h('td', { class: 'num' }, c.evidenceRetention === null ? '—' : ratioPct(c.evidenceRetention)),
          h('td', { class: 'num' }, `${int(c.evidenceWhole)} / ${int(c.evidenceTurns)}`),
          h('td', { class: 'num' }, int(Math.round(c.meanTokens))),
          h('td', { class: 'num' }, int(c.rank1Lost)),
          h('td', { class: 'num' }, int(c.overBeforePassages)),
          ...(v.priced ? [h('td', { class: 'num' }, c.costPer1000Turns === null || c.costPer1000Turns === undefined ? '—' : c.costPer1000Turns.toFixed(4))] : []),
        ),
      ),
    ),
  );
}

export function renderSweep(v: SweepView): HTMLElement {
  const maxTokens = Math.max(1, ...v.cells.map((c) => c.meanTokens));
  return h(
    'div',
    { class: 'sweep' },
    h('p', { class: 'muted' }, `${v.file} · ${int(v.budgets.length)} budgets × ${int(v.plans.length)} plans${v.ks.some((k) => k !== null) ? ` × ${int(v.ks.length)} k` : ''} · ${v.seconds.toFixed(1)} s${v.priced ? '' : ' · set spillway.prices to see input cost per 1,000 turns'}`),
    h('h3', {}, 'Evidence kept'),
    lineChart('Evidence kept', v, (c) => c.evidenceRetention, 1, (y) => ratioPct(y)),
    h('h3', {}, 'Tokens per turn'),
    lineChart('Tokens per turn', v, (c) => c.meanTokens, maxTokens, (y) => int(Math.round(y))),
    h('h3', {}, 'All figures'),
    h('div', { class: 'table-scroll' }, renderSweepTable(v)),
  );
}

/** The Sweep tab's controller. */
export class SweepPanel {
  readonly element: HTMLElement;
  private readonly body: HTMLElement;

  constructor(private readonly reveal: () => void) {
    this.body = h('div', {}, h('p', { class: 'empty' }, 'No sweep yet. Run “Spillway: Sweep Budgets and Plans…” to chart evidence kept and tokens spent per budget and plan.'));
    this.element = h('div', { class: 'sweep-view', role: 'region', 'aria-label': 'Budget and plan sweep', 'data-view': 'sweep' }, h('section', { class: 'card', 'aria-labelledby': 'h-sweep' }, h('h2', { id: 'h-sweep' }, 'Sweep'), this.body));
  }

  handle(msg: HostMessage): boolean {
    if (msg.type !== 'sweepReady') return false;
    setChildren(this.body, renderSweep(msg.sweep));
    if (msg.reveal) this.reveal();
    return true;
  }
}
