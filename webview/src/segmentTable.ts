/**
 * Every segment of the selected turn in prompt order, sortable by any column. A native table with
 * role="grid": header buttons sort (aria-sort says how), rows are selectable with the arrow keys,
 * Home/End and Enter/Space; one row holds the tab stop (roving tabindex).
 */
import type { SegmentView } from '../../extension/protocol/messages';
import { h, s } from './dom';
import { int, ratioPct, score } from './format';
import { fateBadge } from './fate';

export type SortKey = 'order' | 'id' | 'kind' | 'role' | 'rank' | 'score' | 'tokens' | 'share' | 'fate' | 'cut';
export interface SortState {
  key: SortKey;
  dir: 'ascending' | 'descending';
}

const COLUMNS: ReadonlyArray<{ key: SortKey; label: string; num?: boolean }> = [
  { key: 'order', label: '#', num: true },
  { key: 'id', label: 'segment' },
  { key: 'kind', label: 'kind' },
  { key: 'role', label: 'role' },
  { key: 'rank', label: 'rank', num: true },
  { key: 'score', label: 'score', num: true },
  { key: 'tokens', label: 'tokens', num: true },
  { key: 'share', label: 'share of budget', num: true },
  { key: 'fate', label: 'fate' },
  { key: 'cut', label: 'cut (token · char)', num: true },
];

const FATE_ORDER = { kept: 0, clipped: 1, dropped: 2 } as const;

function sortValue(seg: SegmentView, order: number, key: SortKey): number | string {
  switch (key) {
    case 'order': return order;
    case 'id': return seg.id;
    case 'kind': return seg.kind;
    case 'role': return seg.role;
    // Absent ranks/scores sort after present ones in ascending order.
    case 'rank': return seg.rank ?? Number.POSITIVE_INFINITY;
    case 'score': return seg.score ?? Number.NEGATIVE_INFINITY;
    case 'tokens': return seg.tokens;
    case 'share': return seg.share;
    case 'fate': return FATE_ORDER[seg.fate];
    case 'cut': return seg.cut ? seg.cut.token : -1;
  }
}

/** Indices into `segments` in display order (stable: ties keep prompt order). */
export function sortedOrder(segments: readonly SegmentView[], sort: SortState): number[] {
  const idx = segments.map((_, i) => i);
  const sign = sort.dir === 'ascending' ? 1 : -1;
  idx.sort((a, b) => {
    const va = sortValue(segments[a]!, a, sort.key);
    const vb = sortValue(segments[b]!, b, sort.key);
    const c = typeof va === 'number' && typeof vb === 'number' ? (va === vb ? 0 : va < vb ? -1 : 1) : String(va).localeCompare(String(vb));
    return c !== 0 ? c * sign : a - b;
  });
  return idx;
}

function shareCell(share: number): HTMLTableCellElement {
  const w = Math.max(0, Math.min(1, share)) * 100;
  return h(
    'td',
    { class: 'num share' },
    s('svg', { class: 'share-meter', width: 44, height: 8, 'aria-hidden': 'true' }, s('rect', { class: 'meter-track', x: 0, y: 0, width: '100%', height: 8 }), s('rect', { class: 'meter-fill', x: 0, y: 0, width: `${w}%`, height: 8 })),
    ` ${ratioPct(share)}`,
  );
}

export interface SegmentTableOptions {
  segments: readonly SegmentView[];
  selectedId?: string;
  sort: SortState;
  onSelect(id: string): void;
  onSort(sort: SortState): void;
}

export function renderSegmentTable(o: SegmentTableOptions): HTMLTableElement {
  const headRow = h('tr');
  for (const c of COLUMNS) {
    const active = o.sort.key === c.key;
    const btn = h('button', { type: 'button', class: 'sort-button', 'data-sort': c.key }, c.label, h('span', { class: 'sort-arrow', 'aria-hidden': 'true' }, active ? (o.sort.dir === 'ascending' ? ' ▲' : ' ▼') : ''));
    btn.addEventListener('click', () => o.onSort({ key: c.key, dir: active && o.sort.dir === 'ascending' ? 'descending' : 'ascending' }));
    headRow.appendChild(h('th', { scope: 'col', class: c.num ? 'num' : undefined, 'aria-sort': active ? o.sort.dir : 'none' }, btn));
  }
  const body = h('tbody');
  const order = sortedOrder(o.segments, o.sort);
  const hasSelected = o.segments.some((seg) => seg.id === o.selectedId);
  order.forEach((i, pos) => {
    const seg = o.segments[i]!;
    const selected = seg.id === o.selectedId;
    const tr = h(
      'tr',
      { class: `seg-row fate-row-${seg.fate}`, 'data-id': seg.id, 'aria-selected': selected ? 'true' : 'false', tabindex: selected || (!hasSelected && pos === 0) ? 0 : -1, 'aria-label': `${seg.kind} ${seg.id}${seg.rank !== undefined ? `, rank ${seg.rank}` : ''}, ${int(seg.tokens)} tokens, ${seg.fate}` },
      h('td', { class: 'num' }, i + 1),
      h('td', { class: 'seg-id', title: seg.id }, seg.id),
      h('td', {}, seg.kind),
      h('td', {}, seg.role),
      h('td', { class: 'num rank' }, seg.rank ?? '–'),
      h('td', { class: 'num' }, score(seg.score)),
      h('td', { class: 'num' }, seg.fate === 'clipped' ? `${int(seg.keptTokens)} / ${int(seg.tokens)}` : int(seg.tokens)),
      shareCell(seg.share),
      h('td', {}, fateBadge(seg.fate, seg.planFate)),
      h('td', { class: 'cut num', title: seg.cut ? `cut after token ${int(seg.cut.token)}, at character ${int(seg.cut.char)}` : undefined }, seg.cut ? `${int(seg.cut.token)} · ${int(seg.cut.char)}` : '–'),
    );
    tr.addEventListener('click', () => o.onSelect(seg.id));
    body.appendChild(tr);
  });
  body.addEventListener('keydown', (e) => {
    const rows = Array.from(body.querySelectorAll<HTMLTableRowElement>('tr'));
    const cur = rows.indexOf((e.target as Element).closest('tr') as HTMLTableRowElement);
    if (cur < 0) return;
    let next = cur;
    if (e.key === 'ArrowDown') next = Math.min(rows.length - 1, cur + 1);
    else if (e.key === 'ArrowUp') next = Math.max(0, cur - 1);
    else if (e.key === 'Home') next = 0;
    else if (e.key === 'End') next = rows.length - 1;
    else if (e.key === 'Enter' || e.key === ' ') {
      e.preventDefault();
      o.onSelect(rows[cur]!.dataset.id!);
      return;
    } else return;
    e.preventDefault();
    rows[cur]!.tabIndex = -1;
    rows[next]!.tabIndex = 0;
    rows[next]!.focus();
  });
  return h(
    'table',
    { class: 'segment-table', role: 'grid', 'aria-label': 'Segments in prompt order', 'aria-rowcount': o.segments.length + 1 },
    h('thead', {}, headRow),
    body,
  );
}
