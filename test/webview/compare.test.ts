// @vitest-environment happy-dom
import { describe, expect, it } from 'vitest';
import { CompareView, renderComparisonRows, renderComparisonSummary, renderComparisonTurn } from '../../webview/src/compareView';
import { renderSweep, SweepPanel, sweepSeries } from '../../webview/src/sweepChart';
import { PanelApp } from '../../webview/src/app';
import type { PanelState, WebviewMessage } from '../../extension/protocol/messages';
import { PAYLOAD, ROW, SUMMARY, SWEEP, TURN_VIEW } from '../host/repackFixtures';

const text = (el: Element): string => (el.textContent ?? '').replace(/\s+/g, ' ');
const noActiveContent = (root: Element): void => {
  expect(root.querySelectorAll('script, img, iframe, object, embed').length).toBe(0);
  expect(root.querySelectorAll('[style]').length).toBe(0);
  for (const el of Array.from(root.querySelectorAll('*'))) for (const a of Array.from(el.attributes)) expect(a.name.startsWith('on')).toBe(false);
};

describe('comparison rendering', () => {
  it('summarises the totals: turns, worse, passages lost, evidence retention before → after', () => {
    const el = renderComparisonSummary(SUMMARY);
    const t = text(el);
    expect(t).toContain('turns compared10');
    expect(t).toContain('worse⚠ 2'); // the warning icon is text too, not colour only
    expect(t).toContain('passages lost⚠ 5');
    // 0.9 → 0.6 of evidence tokens kept
    expect(t).toContain('evidence retention90.0% → 60.0%');
    // 39,000 / 10 turns = 3,900; 19,800 / 10 = 1,980
    expect(t).toContain('tokens per turn3,900 → 1,980');
    expect(t).toContain('same personal data as the source');
    expect(t).not.toContain('input cost');
    const priced = text(renderComparisonSummary({ ...SUMMARY, totals: { ...SUMMARY.totals, costPer1000TurnsA: 0.585, costPer1000TurnsB: 0.297 } }));
    expect(priced).toContain('input cost per 1,000 turns0.5850 → 0.2970');
  });

  it('lists turns with lost passages as text with an icon, focusable rows, Enter opens', () => {
    const opened: number[] = [];
    const el = renderComparisonRows({ rows: [ROW, { ...ROW, line: 9, verdict: 'same', lost: [], lostCount: 0 }], total: 2, onSelect: (l) => opened.push(l) });
    document.body.replaceChildren(el);
    const rows = Array.from(el.querySelectorAll<HTMLElement>('tr.cmp-row'));
    expect(text(rows[0]!)).toContain('▼ worse');
    expect(text(rows[0]!)).toContain('2 lost: p2 p3');
    expect(text(rows[0]!)).toContain('100.0% → 0.0%');
    expect(rows[0]!.getAttribute('tabindex')).toBe('0');
    expect(rows[1]!.getAttribute('tabindex')).toBe('-1');
    rows[0]!.dispatchEvent(new KeyboardEvent('keydown', { key: 'ArrowDown', bubbles: true }));
    expect(document.activeElement).toBe(rows[1]);
    rows[1]!.dispatchEvent(new KeyboardEvent('keydown', { key: 'Enter', bubbles: true }));
    rows[0]!.click();
    expect(opened).toEqual([9, 3]);
  });

  it('shows both packings side by side; lost passages say "lost"; payload text stays text', () => {
    const el = renderComparisonTurn(TURN_VIEW);
    document.body.replaceChildren(el);
    const sides = el.querySelectorAll('section.compare-side');
    expect(sides).toHaveLength(2);
    expect(sides[0]!.getAttribute('aria-label')).toBe('Before (source log)');
    const lostRows = Array.from(el.querySelectorAll('tr.diff-row-lost'));
    expect(lostRows).toHaveLength(2);
    for (const r of lostRows) expect(text(r)).toContain('✕ lost');
    expect(text(sides[1]!)).toContain('✕ dropped');
    expect(text(sides[1]!)).toContain('✂ cut more');
    expect(text(el)).toContain('passages lost: p2');
    expect(text(el)).toContain(PAYLOAD);
    noActiveContent(el);
    expect((window as unknown as { __pwned?: number }).__pwned).toBeUndefined();
  });
});

describe('CompareView controller', () => {
  it('asks for the first page, opens the first turn, ignores replies of an older comparison', () => {
    const posted: WebviewMessage[] = [];
    let id = 0;
    let revealed = 0;
    const v = new CompareView({ post: (m) => posted.push(m), nextId: () => ++id, reveal: () => revealed++ });
    expect(v.element.getAttribute('role')).toBe('region');
    expect(v.element.getAttribute('aria-label')).toBe('Re-pack comparison');
    expect(v.handle({ type: 'logClosed' })).toBe(false);
    v.handle({ type: 'comparisonReady', summary: SUMMARY, reveal: true });
    expect(revealed).toBe(1);
    expect(posted).toEqual([{ type: 'requestComparisonPage', requestId: 1, offset: 0, limit: 200 }]);
    // a page of another generation is dropped
    v.handle({ type: 'comparisonPage', requestId: 1, generation: 99, offset: 0, total: 1, rows: [ROW] });
    expect(v.element.querySelectorAll('tr.cmp-row')).toHaveLength(0);
    v.handle({ type: 'comparisonPage', requestId: 1, generation: 1, offset: 0, total: 1, rows: [ROW] });
    expect(v.element.querySelectorAll('tr.cmp-row')).toHaveLength(1);
    expect(posted[1]).toEqual({ type: 'requestComparisonTurn', requestId: 2, line: 3 });
    v.handle({ type: 'comparisonTurn', requestId: 2, view: TURN_VIEW });
    expect(v.element.querySelectorAll('section.compare-side')).toHaveLength(2);
    expect(text(v.element)).toMatch(/lost/);
    // an error for its own request is shown in place; others pass through
    expect(v.handle({ type: 'error', requestId: 2, message: 'file changed' })).toBe(true);
    expect(text(v.element)).toContain('⚠ file changed');
    expect(v.handle({ type: 'error', requestId: 77, message: 'x' })).toBe(false);
    // an announcement after reload does not switch views
    v.handle({ type: 'comparisonReady', summary: { ...SUMMARY, generation: 2 }, reveal: false });
    expect(revealed).toBe(1);
  });

  it('lives in the panel as the Compare tab, which a new comparison selects', () => {
    const api = { posted: [] as WebviewMessage[], state: undefined as PanelState | undefined, postMessage(m: WebviewMessage) { api.posted.push(m); }, getState: () => api.state, setState(s: PanelState) { api.state = s; } };
    const root = document.createElement('main');
    document.body.replaceChildren(root);
    const app = new PanelApp(root, api);
    app.start();
    expect(Array.from(root.querySelectorAll('vscode-tab-header')).map((x) => x.textContent)).toEqual(expect.arrayContaining(['Compare', 'Sweep']));
    app.handle({ type: 'comparisonReady', summary: SUMMARY, reveal: true });
    expect(api.state?.view).toBe('compare');
    expect(api.posted.some((m) => m.type === 'requestComparisonPage')).toBe(true);
    expect(root.querySelector('[aria-label="Re-pack comparison"]')).not.toBeNull();
    app.handle({ type: 'sweepReady', sweep: SWEEP, reveal: true });
    expect(api.state?.view).toBe('sweep');
  });
});

describe('sweep chart', () => {
  it('draws one line per plan over the budgets, both charts, and a table with every cell', () => {
    const el = renderSweep(SWEEP);
    document.body.replaceChildren(el);
    expect(sweepSeries(SWEEP).map((s) => s.name)).toEqual(['recent-first', 'evidence-first']);
    const charts = el.querySelectorAll('svg.sweep-chart');
    expect(charts).toHaveLength(2);
    expect(charts[0]!.querySelectorAll('polyline')).toHaveLength(2);
    expect(charts[0]!.querySelectorAll('circle')).toHaveLength(4);
    // 2 budgets → x at the left edge (48) and at 460 − 130 = 330; evidence 0.5 → y = 12 + (1 − 0.5) × (200 − 12 − 34) = 89;
    // 0.875 → y = 12 + 0.125 × 154 = 31.25 → "31.3"
    expect(charts[0]!.querySelector('polyline')!.getAttribute('points')).toBe('48.0,89.0 330.0,31.3');
    expect(text(charts[0]!)).toContain('recent-first');
    const rows = el.querySelectorAll('table.sweep-table tbody tr');
    expect(rows).toHaveLength(4);
    expect(text(rows[1]!)).toContain('2,048evidence-first—75.0%5 / 81,950102.9250');
    expect(text(el.querySelector('table.sweep-table thead')!)).toContain('Cost / 1,000 turns');
    noActiveContent(el);
  });

  it('leaves the cost column out when no prices are set, and says how to set them', () => {
    const el = renderSweep({ ...SWEEP, priced: false });
    expect(text(el)).toContain('set spillway.prices');
    expect(text(el.querySelector('table')!)).not.toContain('Cost');
  });

  it('renders plan names from the host as text', () => {
    const p = new SweepPanel(() => undefined);
    p.handle({ type: 'sweepReady', sweep: { ...SWEEP, cells: SWEEP.cells.map((c) => ({ ...c, plan: PAYLOAD })), plans: [PAYLOAD] }, reveal: false });
    expect(text(p.element)).toContain(PAYLOAD);
    noActiveContent(p.element);
  });
});
