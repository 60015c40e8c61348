// @vitest-environment happy-dom
import { beforeEach, describe, expect, it, vi } from 'vitest';
import { PanelApp, defaultSegment } from '../../webview/src/app';
import type { HostMessage, PanelState, WebviewMessage } from '../../extension/protocol/messages';
import type { VsCodeApi } from '../../webview/src/vscodeApi';
import { conversationRows, DETAIL, ROW, SEGMENTS } from './viewModels';

/** A fake of what acquireVsCodeApi() returns: records posts, keeps state in memory. */
function fakeApi(initial?: PanelState): VsCodeApi & { posted: WebviewMessage[]; state: PanelState | undefined } {
  const api = {
    posted: [] as WebviewMessage[],
    state: initial,
    postMessage(m: WebviewMessage) {
      api.posted.push(m);
    },
    getState: () => api.state,
    setState(s: PanelState) {
      api.state = s;
    },
  };
  return api;
}

const last = <T extends WebviewMessage['type']>(api: { posted: WebviewMessage[] }, type: T): Extract<WebviewMessage, { type: T }> | undefined =>
  [...api.posted].reverse().find((m): m is Extract<WebviewMessage, { type: T }> => m.type === type);

function boot(initial?: PanelState): { app: PanelApp; api: ReturnType<typeof fakeApi>; root: HTMLElement; firstPaint: ReturnType<typeof vi.fn> } {
  const api = fakeApi(initial);
  const root = document.createElement('main');
  document.body.replaceChildren(root);
  let t = 100;
  const firstPaint = vi.fn();
  const app = new PanelApp(root, api, { scriptStart: 100, now: () => (t += 42), onFirstPaint: firstPaint });
  app.start();
  return { app, api, root, firstPaint };
}

/** Opens a 3-turn log and answers the turn request with DETAIL. */
function openWithTurn(b: ReturnType<typeof boot>): void {
  b.app.handle({ type: 'logOpened', file: '/logs/fares.jsonl', turns: 3, selectLine: 7 });
  const req = last(b.api, 'requestTurn')!;
  b.app.handle({ type: 'turn', requestId: req.requestId, detail: DETAIL });
}

describe('panel app and the host protocol', () => {
  beforeEach(() => document.body.replaceChildren());

  it('says ready with the restored state', () => {
    const { api } = boot({ line: 42, segmentId: 'p3', view: 'overview' });
    expect(api.posted[0]).toEqual({ type: 'ready', state: { line: 42, segmentId: 'p3', view: 'overview' } });
    expect(boot().api.posted[0]).toEqual({ type: 'ready', state: { view: 'turn' } });
  });

  it('on logOpened asks for the overview, a first page and the turn to select, never the whole log', () => {
    const b = boot();
    b.app.handle({ type: 'logOpened', file: '/logs/fares.jsonl', turns: 100_000, selectLine: 7 });
    const types = b.api.posted.map((m) => m.type);
    expect(types).toContain('requestOverview');
    expect(last(b.api, 'requestTurn')!.line).toBe(7);
    const pages = b.api.posted.filter((m): m is Extract<WebviewMessage, { type: 'requestTurns' }> => m.type === 'requestTurns');
    expect(pages).toEqual([{ type: 'requestTurns', requestId: pages[0]!.requestId, offset: 0, limit: 200 }]);
    expect(types).not.toContain('revealLine');
    expect(b.root.querySelector('.log-title')!.textContent).toBe('fares.jsonl · 100,000 turns');
  });

  it('renders the turn, picks the clipped passage, saves state and reports first paint', async () => {
    const b = boot();
    openWithTurn(b);
    expect(b.root.querySelector('.turn-title')!.textContent).toBe('trip-0042 · turn 3');
    expect(b.root.querySelectorAll('.segment-table tbody tr')).toHaveLength(6);
    expect(b.root.querySelector('.passage')!.getAttribute('data-segment')).toBe('p2');
    expect(b.api.state).toEqual({ view: 'turn', line: 7, segmentId: 'p2' });
    expect(last(b.api, 'requestConversation')!.conversation).toBe('trip-0042');
    await vi.waitFor(() => expect(b.firstPaint).toHaveBeenCalled());
    // the fake clock advances 42 per call: 100 → 142
    expect(last(b.api, 'metric')).toEqual({ type: 'metric', name: 'firstPaintMs', value: 42 });
  });

  it('ignores a reply to a superseded request', () => {
    const b = boot();
    b.app.handle({ type: 'logOpened', file: 'f.jsonl', turns: 3, selectLine: 7 });
    const first = last(b.api, 'requestTurn')!;
    b.app.handle({ type: 'selectTurn', line: 9 });
    const second = last(b.api, 'requestTurn')!;
    expect(second.line).toBe(9);
    b.app.handle({ type: 'turn', requestId: first.requestId, detail: DETAIL });
    expect(b.root.querySelector('.turn-title')).toBeNull();
    b.app.handle({ type: 'turn', requestId: second.requestId, detail: { ...DETAIL, row: { ...ROW, line: 9, turn: 4 } } });
    expect(b.root.querySelector('.turn-title')!.textContent).toBe('trip-0042 · turn 4');
  });

  it('host selectTurn selects without revealing; the same line again is a no-op', () => {
    const b = boot();
    openWithTurn(b);
    const n = b.api.posted.length;
    b.app.handle({ type: 'selectTurn', line: 7 });
    expect(b.api.posted.length).toBe(n);
    b.app.handle({ type: 'selectTurn', line: 12 });
    expect(last(b.api, 'requestTurn')!.line).toBe(12);
    expect(b.api.posted.slice(n).some((m) => m.type === 'revealLine')).toBe(false);
  });

  it('selecting a segment reveals its line and segment in the editor', () => {
    const b = boot();
    openWithTurn(b);
    (b.root.querySelector('tr[data-id="p3"]') as HTMLElement).click();
    expect(last(b.api, 'revealLine')).toEqual({ type: 'revealLine', line: 7, segmentId: 'p3' });
    expect(b.api.state!.segmentId).toBe('p3');
    expect(b.root.querySelector('.passage')!.getAttribute('data-segment')).toBe('p3');
  });

  it('draws the conversation; clicking a turn there selects and reveals it', () => {
    const b = boot();
    openWithTurn(b);
    const req = last(b.api, 'requestConversation')!;
    b.app.handle({ type: 'conversation', requestId: req.requestId, conversation: 'trip-0042', rows: conversationRows(5) });
    const turns = b.root.querySelectorAll<SVGGElement>('g.tl-turn');
    expect(turns).toHaveLength(5);
    turns[4]!.dispatchEvent(new MouseEvent('click', { bubbles: true }));
    expect(last(b.api, 'requestTurn')!.line).toBe(9);
    expect(last(b.api, 'revealLine')).toEqual({ type: 'revealLine', line: 9 });
  });

  it('a conversation reply or a segment click rebuilds only their parts of the view', () => {
    const b = boot();
    openWithTurn(b);
    const bar = b.root.querySelector('svg.budget-bar');
    const table = b.root.querySelector('table.segment-table');
    const req = last(b.api, 'requestConversation')!;
    b.app.handle({ type: 'conversation', requestId: req.requestId, conversation: 'trip-0042', rows: conversationRows(5) });
    expect(b.root.querySelector('svg.budget-bar')).toBe(bar);
    expect(b.root.querySelector('table.segment-table')).toBe(table);
    const timeline = b.root.querySelector('svg.timeline');
    expect(timeline).not.toBeNull();
    (b.root.querySelector('tr[data-id="p1"]') as HTMLElement).click();
    expect(b.root.querySelector('svg.budget-bar')).toBe(bar);
    expect(b.root.querySelector('svg.timeline')).toBe(timeline);
    expect(b.root.querySelector('table.segment-table')).not.toBe(table);
    expect(b.root.querySelector('tr[data-id="p1"]')!.getAttribute('aria-selected')).toBe('true');
    // the previous/next buttons appear once the conversation is known: turn 3 of 5 has both
    expect(Array.from(b.root.querySelectorAll('.turn-nav vscode-button')).map((x) => x.hasAttribute('disabled'))).toEqual([false, false, false]);
  });

  it('asks for token boundaries when the option is switched on and draws them', () => {
    const b = boot();
    openWithTurn(b);
    const toggle = b.root.querySelector('.boundary-toggle') as HTMLElement & { checked: boolean };
    toggle.checked = true;
    toggle.dispatchEvent(new Event('change', { bubbles: true }));
    const req = last(b.api, 'requestTokenBoundaries')!;
    expect(req).toEqual({ type: 'requestTokenBoundaries', requestId: req.requestId, line: 7, segmentId: 'p2' });
    b.app.handle({ type: 'tokenBoundaries', requestId: req.requestId, line: 7, segmentId: 'p2', boundaries: [6, 31, 40] });
    expect(Array.from(b.root.querySelectorAll('.passage .tok')).map((t) => t.textContent!.length)).toEqual([6, 25, 9, SEGMENTS[3]!.text.length - 40]);
  });

  it('jumps from the worst-turn list to the turn view', () => {
    const b = boot();
    openWithTurn(b);
    const req = last(b.api, 'requestOverview')!;
    b.app.handle({ type: 'overview', requestId: req.requestId, overview: { file: 'f', turns: 3, conversations: 1, overBudget: 0, overBeforePassages: 0, rank1Clipped: 0, rank1Dropped: 0, malformed: 0, spill: 0, useHistogram: new Array(11).fill(0), worst: conversationRows(2) } });
    (b.root.querySelectorAll<HTMLButtonElement>('.worst button')[1]!).click();
    expect(last(b.api, 'requestTurn')!.line).toBe(6);
    expect(last(b.api, 'revealLine')).toEqual({ type: 'revealLine', line: 6 });
    expect(b.api.state!.view).toBe('turn');
  });

  it('a restored line that is gone falls back to the first turn', () => {
    const b = boot({ line: 999, view: 'turn' });
    b.app.handle({ type: 'logOpened', file: 'f.jsonl', turns: 3 });
    const req = last(b.api, 'requestTurn')!;
    expect(req.line).toBe(999);
    const page = last(b.api, 'requestTurns')!;
    b.app.handle({ type: 'turns', requestId: page.requestId, offset: 0, total: 3, rows: conversationRows(3) });
    b.app.handle({ type: 'error', requestId: req.requestId, message: 'No record on line 999' });
    expect(last(b.api, 'requestTurn')!.line).toBe(5);
    expect(b.root.querySelector('.status')!.textContent).toBe('⚠ No record on line 999');
  });

  it('ignores messages that are not host messages', () => {
    const b = boot();
    const n = b.api.posted.length;
    for (const junk of [null, 42, 'turn', {}, { type: 7 }, { type: 'nonsense' }]) b.app.handle(junk as unknown as HostMessage);
    expect(b.api.posted.length).toBe(n);
  });

  it('defaults to the first clipped passage, else the best-ranked one', () => {
    expect(defaultSegment(SEGMENTS)!.id).toBe('p2');
    expect(defaultSegment(SEGMENTS.filter((s) => s.id !== 'p2'))!.id).toBe('p1');
    expect(defaultSegment(SEGMENTS.filter((s) => s.kind !== 'passage'))).toBeUndefined();
  });
});
