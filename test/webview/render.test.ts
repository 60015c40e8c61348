// @vitest-environment happy-dom
import { describe, expect, it, vi } from 'vitest';
import { budgetBar } from '../../webview/src/budget';
import { renderBudgetBar, renderBudgetTable } from '../../webview/src/budgetView';
import { renderSegmentTable, sortedOrder, type SortState } from '../../webview/src/segmentTable';
import { renderPassage, splitOf } from '../../webview/src/passageView';
import { renderTimeline } from '../../webview/src/timeline';
import { renderOverview } from '../../webview/src/overview';
import type { LogOverview, SegmentView } from '../../extension/protocol/messages';
import { conversationRows, P2_KEPT, P2_SPILLED, P2_TEXT, PAYLOADS, ROW, SEGMENTS } from './viewModels';

const pctWidth = (el: Element): number => Number(el.getAttribute('width')!.replace('%', ''));

describe('budget bar', () => {
  it('lays the parts end to end over max(window, used) + spill', () => {
    const bar = budgetBar(ROW, 1210);
    const drawn = Object.fromEntries(bar.parts.map((p) => [p.key, p.drawn]));
    // free = 7,168 − 6,972 = 196; reserve 1,024 untouched; spill 1,210.
    expect(drawn).toEqual({ instructions: 412, history: 3250, query: 58, passage: 3106, tool: 0, framing: 146, free: 196, reserve: 1024, spill: 1210 });
    // 8,192 (window ≥ used 6,972) + 1,210 = 9,402
    expect(bar.scale).toBe(9402);
    expect(bar.parts.reduce((a, p) => a + p.drawn, 0)).toBe(9402);
    // each part starts where the previous ended
    bar.parts.forEach((p, i) => i > 0 && expect(p.start).toBe(bar.parts[i - 1]!.start + bar.parts[i - 1]!.drawn));
  });

  it('an over-budget prompt eats into the reserve', () => {
    // used 7,400 against budget 7,168: over 232, reserve drawn 1,024 − 232 = 792, no free room.
    const row = { ...ROW, used: 7400, byKind: { ...ROW.byKind, history: 3678 }, state: 'over-budget' as const };
    const bar = budgetBar(row, 0);
    expect(bar.over).toBe(232);
    expect(bar.parts.find((p) => p.key === 'free')!.drawn).toBe(0);
    expect(bar.parts.find((p) => p.key === 'reserve')!.drawn).toBe(792);
    // 412 + 3,678 + 58 + 3,106 + 146 = 7,400 used; + 792 = 8,192 = window
    expect(bar.scale).toBe(8192);
  });

  it('draws one rect per non-empty part, widths summing to 100%, with token/percent tooltips', () => {
    const svg = renderBudgetBar(budgetBar(ROW, 1210));
    const rects = Array.from(svg.querySelectorAll('rect.part'));
    expect(rects.map((r) => r.getAttribute('data-part'))).toEqual(['instructions', 'history', 'query', 'passage', 'framing', 'free', 'reserve', 'spill']);
    expect(rects.reduce((a, r) => a + pctWidth(r), 0)).toBeCloseTo(100, 6);
    // history 3,250 / 9,402 = 34.567…% of the bar
    expect(pctWidth(rects[1]!)).toBeCloseTo(34.5671, 3);
    // 3,250 / 7,168 = 0.45340 → 45.3%
    expect(rects[1]!.querySelector('title')!.textContent).toBe('history: 3,250 tokens · 45.3% of budget');
    expect(svg.getAttribute('role')).toBe('img');
    expect(svg.getAttribute('aria-label')).toBe('Budget use: 6,972 of 7,168 tokens (97.3%), 196 free, 1,210 tokens spilled');
  });

  it('has a text table with the same figures', () => {
    const table = renderBudgetTable(budgetBar(ROW, 1210));
    const row = (part: string): string[] => Array.from(table.querySelectorAll(`tr[data-part="${part}"] > *`)).map((c) => c.textContent!.trim());
    // 3,250 / 8,192 = 0.39673 → 39.7% of the window
    expect(row('history')).toEqual(['history', '3,250', '45.3%', '39.7%']);
    // framing 140 + joins 6 = 146; 146 / 7,168 = 2.04% → 2.0%
    expect(row('framing')).toEqual(['framing & joins', '146', '2.0%', '1.8%']);
    expect(row('reserve')).toEqual(['output reserve', '1,024', '–', '12.5%']);
    expect(row('spill')).toEqual(['spill (not sent)', '1,210', '16.9%', '14.8%']);
    expect(table.querySelector('tr[data-part="tool"]')).toBeNull();
    expect(table.querySelector('tfoot')!.textContent).toContain('6,972 / 7,168');
  });
});

describe('segment table', () => {
  const render = (sort: SortState = { key: 'order', dir: 'ascending' }, onSelect = vi.fn(), onSort = vi.fn()) =>
    renderSegmentTable({ segments: SEGMENTS, selectedId: 'p2', sort, onSelect, onSort });

  it('lists every segment in prompt order with rank, tokens, share, fate icon + word and cut point', () => {
    const table = render();
    const rows = Array.from(table.querySelectorAll('tbody tr'));
    expect(rows.map((r) => r.getAttribute('data-id'))).toEqual(['sys', 'h1', 'p1', 'p2', 'p3', 'q']);
    const cells = (id: string): string[] => Array.from(table.querySelectorAll(`tr[data-id="${id}"] td`)).map((c) => c.textContent!.trim());
    // p2: 412 of 845 tokens kept; 412 / 7,168 = 5.75% → 5.7%
    expect(cells('p2')).toEqual(['4', 'p2', 'passage', 'system', '2', '9.87', '412 / 845', '5.7%', '✂ clipped', '412 · 31']);
    expect(cells('p3')).toEqual(['5', 'p3', 'passage', 'system', '3', '7.50', '777', '0.0%', '✕ dropped', '–']);
    expect(cells('p1').slice(7, 9)).toEqual(['37.6%', '✓ kept']); // 2,694 / 7,168 = 37.58%
    // the icon is decoration; the word carries the meaning
    const icon = table.querySelector('tr[data-id="p3"] .fate-icon')!;
    expect(icon.getAttribute('aria-hidden')).toBe('true');
    expect(table.querySelector('tr[data-id="p2"]')!.getAttribute('aria-selected')).toBe('true');
  });

  it('sorts by rank (absent ranks last), both directions, and says so with aria-sort', () => {
    expect(sortedOrder(SEGMENTS, { key: 'rank', dir: 'ascending' }).map((i) => SEGMENTS[i]!.id)).toEqual(['p1', 'p2', 'p3', 'sys', 'h1', 'q']);
    expect(sortedOrder(SEGMENTS, { key: 'tokens', dir: 'descending' }).map((i) => SEGMENTS[i]!.id)).toEqual(['h1', 'p1', 'p2', 'p3', 'sys', 'q']);
    const onSort = vi.fn();
    const table = render({ key: 'rank', dir: 'ascending' }, vi.fn(), onSort);
    const rankHeader = table.querySelector('button[data-sort="rank"]')!.closest('th')!;
    expect(rankHeader.getAttribute('aria-sort')).toBe('ascending');
    expect(table.querySelector('button[data-sort="tokens"]')!.closest('th')!.getAttribute('aria-sort')).toBe('none');
    (table.querySelector('button[data-sort="rank"]') as HTMLButtonElement).click();
    expect(onSort).toHaveBeenCalledWith({ key: 'rank', dir: 'descending' });
    (table.querySelector('button[data-sort="score"]') as HTMLButtonElement).click();
    expect(onSort).toHaveBeenLastCalledWith({ key: 'score', dir: 'ascending' });
  });

  it('is keyboard-operable: arrows move the focus, Enter selects', () => {
    const onSelect = vi.fn();
    const table = render(undefined, onSelect);
    document.body.replaceChildren(table);
    const p2 = table.querySelector<HTMLElement>('tr[data-id="p2"]')!;
    expect(p2.tabIndex).toBe(0);
    p2.focus();
    p2.dispatchEvent(new KeyboardEvent('keydown', { key: 'ArrowDown', bubbles: true }));
    expect(document.activeElement?.getAttribute('data-id')).toBe('p3');
    document.activeElement!.dispatchEvent(new KeyboardEvent('keydown', { key: 'Enter', bubbles: true }));
    expect(onSelect).toHaveBeenCalledWith('p3');
    (table.querySelector('tr[data-id="sys"]') as HTMLElement).click();
    expect(onSelect).toHaveBeenLastCalledWith('sys');
  });
});

describe('passage text with the cut', () => {
  const p2 = SEGMENTS.find((s) => s.id === 'p2')!;

  it('splits at the exact UTF-16 offset from the core, token counts either side', () => {
    expect(P2_KEPT.length).toBe(31);
    const el = renderPassage({ segment: p2 });
    expect(el.querySelector('.text-kept')!.textContent).toBe(P2_KEPT);
    expect(el.querySelector('.text-spilled')!.textContent).toBe(P2_SPILLED);
    const mark = el.querySelector('.cut-mark')!;
    expect(mark.getAttribute('role')).toBe('separator');
    // 412 kept; 845 − 412 = 433 spilled
    expect(mark.textContent).toBe('▲ 412 tokens kept · ✂ cut at char 31 · 433 tokens spilled ▼');
    expect(mark.getAttribute('aria-label')).toBe('Cut point: 412 tokens kept before, 433 tokens spilled after');
    // order in the DOM: kept, mark, spilled
    expect(Array.from(el.querySelector('.passage-text')!.children).map((c) => c.className)).toEqual(['text-kept', 'cut-mark cut-clipped', 'text-spilled']);
  });

  it('counts the offset in UTF-16 units (a bus emoji is two)', () => {
    // '🚌 Bus ' = 2 + 1 + 3 + 1 = 7 units
    const seg: SegmentView = { ...p2, text: '🚌 Bus 4 leaves at 05:10.', cut: { token: 3, char: 7 }, tokens: 9, keptTokens: 3 };
    const el = renderPassage({ segment: seg });
    expect(el.querySelector('.text-kept')!.textContent).toBe('🚌 Bus ');
    expect(el.querySelector('.text-spilled')!.textContent).toBe('4 leaves at 05:10.');
    expect(splitOf(seg)).toEqual({ char: 7, keptTokens: 3, spilledTokens: 6 });
  });

  it('a dropped segment is all spill, a kept one all kept', () => {
    const dropped = renderPassage({ segment: SEGMENTS.find((s) => s.id === 'p3')! });
    expect(dropped.querySelector('.text-kept')!.textContent).toBe('');
    expect(dropped.querySelector('.text-spilled')!.textContent).toBe('Lost property is kept for 28 days.');
    expect(dropped.querySelector('.cut-mark')!.textContent).toBe('✕ dropped: nothing sent · 777 tokens spilled ▼');
    const kept = renderPassage({ segment: SEGMENTS.find((s) => s.id === 'p1')! });
    expect(kept.querySelector('.text-spilled')!.textContent).toBe('');
    expect(kept.querySelector('.cut-mark')!.textContent).toBe('▲ all 2,694 tokens kept');
  });

  it('renders token boundaries as spans on either side of the cut', () => {
    // Boundaries at 6, 10, 31 (the cut), 39; out-of-range and duplicate values are ignored.
    const el = renderPassage({ segment: p2, boundaries: [0, 6, 10, 10, 31, 39, P2_TEXT.length, 9999] });
    const kept = Array.from(el.querySelectorAll('.text-kept .tok')).map((t) => t.textContent);
    const spilled = Array.from(el.querySelectorAll('.text-spilled .tok')).map((t) => t.textContent);
    expect(kept).toEqual([P2_TEXT.slice(0, 6), P2_TEXT.slice(6, 10), P2_TEXT.slice(10, 31)]);
    expect(spilled).toEqual([P2_TEXT.slice(31, 39), P2_TEXT.slice(39)]);
    expect(el.querySelector('.boundary-note')!.textContent).toBe('5 tokens marked (alternating shading).');
    expect(el.querySelector('.passage-text')!.textContent!.replace(/▲.*▼/, '')).toBe(P2_TEXT);
  });
});

describe('untrusted text renders as text', () => {
  it.each(PAYLOADS)('payload %s creates no element and runs nothing', (payload) => {
    const seg: SegmentView = { ...SEGMENTS[3]!, id: payload, text: `Day pass ${payload} costs £6.40.`, cut: { token: 2, char: 12 }, source: payload };
    const root = document.createElement('div');
    document.body.replaceChildren(root);
    root.append(
      renderPassage({ segment: seg }),
      renderPassage({ segment: seg, boundaries: [3, 9, 12, 20] }),
      renderSegmentTable({ segments: [seg], sort: { key: 'order', dir: 'ascending' }, onSelect: () => {}, onSort: () => {} }),
      renderTimeline({ conversation: payload, rows: conversationRows(2, payload), onSelect: () => {} }),
      renderOverview({ overview: { ...overview(), file: payload, worst: conversationRows(1, payload) }, onJump: () => {} }),
    );
    expect(root.querySelectorAll('script, img, iframe, a, style, b, circle, textarea').length).toBe(0);
    expect(root.querySelectorAll('[onerror], [onload], [onmouseover], [href], [srcdoc]').length).toBe(0);
    expect((window as unknown as { __spillwayPwned?: number }).__spillwayPwned).toBeUndefined();
    expect(root.querySelector('.passage-text')!.textContent).toContain(payload.slice(3));
    expect(root.querySelector('td.seg-id')!.textContent).toBe(payload);
  });
});

function overview(): LogOverview {
  return { file: 'fares.jsonl', turns: 120, conversations: 9, overBudget: 4, overBeforePassages: 1, rank1Clipped: 3, rank1Dropped: 2, malformed: 1, spill: 18_422, useHistogram: [0, 1, 2, 5, 9, 14, 20, 25, 23, 17, 4], worst: conversationRows(3) };
}

describe('conversation timeline', () => {
  it('stacks kept tokens by kind per turn against the budget line, selected turn marked, click and keys select', () => {
    const onSelect = vi.fn();
    const rows = conversationRows(4);
    const wrap = renderTimeline({ conversation: 'trip-0042', rows, selectedLine: 6, onSelect });
    document.body.replaceChildren(wrap);
    const turns = Array.from(wrap.querySelectorAll<SVGGElement>('g.tl-turn'));
    expect(turns).toHaveLength(4);
    // turn 1 has no history (500 × 0): instructions, query, passages, framing → 4 rects
    expect(turns[0]!.querySelectorAll('rect.part')).toHaveLength(4);
    expect(turns[1]!.querySelectorAll('rect.part')).toHaveLength(5);
    expect(turns[1]!.getAttribute('aria-pressed')).toBe('true');
    expect(turns[1]!.querySelector('.tl-selected')).not.toBeNull();
    // turn 2: history 500; used stays 6,972 of 7,168 = 97.3%
    expect(turns[1]!.getAttribute('aria-label')).toBe('Turn 2: 6,972 of 7,168 tokens (97.3%), history 500, passages 3,106');
    expect(wrap.querySelector('path.budget-line')).not.toBeNull();
    turns[3]!.dispatchEvent(new MouseEvent('click', { bubbles: true }));
    expect(onSelect).toHaveBeenCalledWith(8);
    turns[1]!.focus();
    turns[1]!.dispatchEvent(new KeyboardEvent('keydown', { key: 'ArrowRight', bubbles: true }));
    expect(document.activeElement).toBe(turns[2]);
    turns[2]!.dispatchEvent(new KeyboardEvent('keydown', { key: 'Enter', bubbles: true }));
    expect(onSelect).toHaveBeenLastCalledWith(7);
    // bar heights in a stack are proportional to tokens: history 1,500 vs passages 3,106 on turn 4
    const h = (g: Element, k: string): number => Number(g.querySelector(`rect[data-part="${k}"]`)!.getAttribute('height'));
    expect(h(turns[3]!, 'history') / h(turns[3]!, 'passage')).toBeCloseTo(1500 / 3106, 6);
  });
});

describe('log overview', () => {
  it('shows the counts, the histogram and jumps to the worst turns', () => {
    const onJump = vi.fn();
    const el = renderOverview({ overview: overview(), onJump });
    const stats = Object.fromEntries(Array.from(el.querySelectorAll('.stat')).map((s) => [s.querySelector('dt')!.textContent, s.querySelector('dd')!.textContent!.replace('⚠ ', '')]));
    expect(stats).toMatchObject({ turns: '120', 'over-budget turns': '4', 'rank-1 clipped': '3', 'rank-1 dropped': '2', 'malformed lines': '1', 'tokens spilled': '18,422' });
    expect(el.querySelectorAll('rect.hist-bar')).toHaveLength(11);
    const worst = el.querySelectorAll<HTMLButtonElement>('.worst button');
    expect(worst).toHaveLength(3);
    worst[1]!.click();
    expect(onJump).toHaveBeenCalledWith(6);
  });
});
