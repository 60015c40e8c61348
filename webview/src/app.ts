/**
 * The panel controller: keeps what is selected, asks the host for what it needs (pages, one turn,
 * one conversation, the overview, token boundaries) and renders the views from the replies.
 * Host replies are matched by requestId; a reply to a superseded request is ignored.
 */
import type { HostMessage, LogOverview, PanelState, SegmentView, TurnDetail, TurnRow } from '../../extension/protocol/messages';
import type { VsCodeApi } from './vscodeApi';
import { h, setChildren } from './dom';
import { int, pct } from './format';
import { budgetBar } from './budget';
import { renderBudgetBar, renderBudgetTable } from './budgetView';
import { renderSegmentTable, type SortState } from './segmentTable';
import { renderPassage } from './passageView';
import { renderGrounding } from './groundingView';
import { renderTimeline } from './timeline';
import { renderOverview } from './overview';
import { TurnList } from './turnList';
import { CompareView } from './compareView';
import { SweepPanel } from './sweepChart';

type View = NonNullable<PanelState['view']>;
/** Tabs in order; a view added later (e.g. 'compare') gets its own entry here. */
const VIEWS: ReadonlyArray<{ id: View; label: string }> = [
  { id: 'turn', label: 'Turn' },
  { id: 'overview', label: 'Log' },
  { id: 'compare', label: 'Compare' },
  { id: 'sweep', label: 'Sweep' },
];
const ROW_HEIGHT = 24;

export interface PanelAppOptions {
  /** performance.now() when the script started, for the first-paint figure. */
  scriptStart?: number;
  now?: () => number;
  /** Called after the first turn view is on screen (tests hook in here). */
  onFirstPaint?: (ms: number) => void;
}

function section(title: string, id: string, ...body: Array<Node | null>): HTMLElement {
  return h('section', { class: 'card', 'aria-labelledby': id }, h('h2', { id }, title), ...body);
}

export class PanelApp {
  private state: PanelState;
  private nextId = 1;
  private readonly latest: Record<string, number> = {};
  private file: string | undefined;
  private detail: TurnDetail | undefined;
  private conversation: { id: string; rows: TurnRow[] } | undefined;
  private overview: LogOverview | undefined;
  private sort: SortState = { key: 'order', dir: 'ascending' };
  private showBoundaries = false;
  private readonly boundaries = new Map<string, number[]>();
  private firstPainted = false;
  private needFirstRow = false;

  readonly root: HTMLElement;
  private readonly status: HTMLElement;
  private readonly title: HTMLElement;
  private readonly tabs: HTMLElement;
  private readonly panels = new Map<View, HTMLElement>();
  private readonly turnBody: HTMLElement;
  private readonly overviewBody: HTMLElement;
  readonly list: TurnList;
  /** Re-pack comparison and sweep views (their own controllers). */
  readonly compare: CompareView;
  readonly sweep: SweepPanel;
  /** Kept across renders: replacing the widget while it handles its own click loses the click. */
  private readonly boundaryToggle: HTMLElement & { checked?: boolean };
  /** Containers of the parts of the turn view that are rebuilt on their own. */
  private slots: { head: HTMLElement; table: HTMLElement; text: HTMLElement; conv: HTMLElement } | undefined;
  private renderedDetail: TurnDetail | undefined;

  constructor(root: HTMLElement, private readonly api: VsCodeApi, private readonly opts: PanelAppOptions = {}) {
    this.root = root;
    this.state = { view: 'turn', ...(api.getState() ?? {}) };
    this.title = h('span', { class: 'log-title' }, 'No log open');
    this.status = h('span', { class: 'status', role: 'status', 'aria-live': 'polite' });
    this.list = new TurnList({ rowHeight: ROW_HEIGHT, requestPage: (offset, limit) => this.post({ type: 'requestTurns', requestId: this.id('turns'), offset, limit }), onSelect: (line) => this.selectTurn(line, true) });
    this.turnBody = h('div', { class: 'turn-view' }, h('p', { class: 'empty' }, 'Open a Spillway log (.jsonl) in the editor to see each turn’s ledger here.'));
    this.overviewBody = h('div', { class: 'overview-view' });
    this.boundaryToggle = h('vscode-checkbox', { label: 'Show token boundaries', class: 'boundary-toggle' });
    this.boundaryToggle.addEventListener('change', () => {
      this.showBoundaries = Boolean(this.boundaryToggle.checked);
      if (this.showBoundaries) this.askBoundaries();
      this.renderTurn(['text']);
    });
    const logPanel = h('div', {}, this.overviewBody, section('All turns', 'h-all-turns', this.list.element));

    this.tabs = h('vscode-tabs', { class: 'tabs', panel: true });
    this.compare = new CompareView({ post: (m) => this.post(m), nextId: () => this.id('compare'), reveal: () => this.showView('compare') });
    this.sweep = new SweepPanel(() => this.showView('sweep'));
    const bodies: Record<string, HTMLElement> = { turn: this.turnBody, overview: logPanel, compare: this.compare.element, sweep: this.sweep.element };
    for (const v of VIEWS) {
      this.tabs.appendChild(h('vscode-tab-header', { slot: 'header', id: `tab-${v.id}` }, v.label));
      const panel = h('vscode-tab-panel', { 'aria-label': `${v.label} view` }, bodies[v.id] ?? null);
      this.panels.set(v.id, panel);
      this.tabs.appendChild(panel);
    }
    (this.tabs as HTMLElement & { selectedIndex?: number }).selectedIndex = Math.max(0, VIEWS.findIndex((v) => v.id === this.state.view));
    this.tabs.addEventListener('vsc-tabs-select', (e) => {
      const v = VIEWS[(e as CustomEvent<{ selectedIndex: number }>).detail.selectedIndex];
      if (v) this.showView(v.id, false);
    });
    setChildren(root, h('header', { class: 'top' }, this.title, this.status), this.tabs);
  }

  /** Announce readiness (with the restored state) to the host. */
  start(): void {
    this.post({ type: 'ready', state: this.state });
  }

  private post(m: Parameters<VsCodeApi['postMessage']>[0]): void {
    this.api.postMessage(m);
  }

  private id(kind: string): number {
    const id = this.nextId++;
    this.latest[kind] = id;
    return id;
  }

  private save(): void {
    this.api.setState({ ...this.state });
  }

  showView(view: View, updateTabs = true): void {
    this.state.view = view;
    this.save();
    if (updateTabs) (this.tabs as HTMLElement & { selectedIndex?: number }).selectedIndex = Math.max(0, VIEWS.findIndex((v) => v.id === view));
    if (view === 'overview') this.list.render();
  }

  /** Select a turn by its line; `reveal` also moves the editor to it. */
  selectTurn(line: number, reveal: boolean): void {
    if (line !== this.state.line) this.state.segmentId = undefined;
    this.state.line = line;
    this.save();
    this.list.setSelected(line);
    this.post({ type: 'requestTurn', requestId: this.id('turn'), line });
    if (reveal) this.post({ type: 'revealLine', line });
  }

  selectSegment(id: string, reveal: boolean): void {
    this.state.segmentId = id;
    this.save();
    this.renderTurn(['table', 'text']);
    if (this.showBoundaries) this.askBoundaries();
    if (reveal && this.detail) this.post({ type: 'revealLine', line: this.detail.row.line, segmentId: id });
  }

  handle(msg: HostMessage): void {
    if (!msg || typeof msg !== 'object' || typeof (msg as { type?: unknown }).type !== 'string') return;
    if (this.compare.handle(msg) || this.sweep.handle(msg)) return;
    switch (msg.type) {
      case 'logOpened':
        this.file = msg.file;
        this.detail = undefined;
        this.conversation = undefined;
        this.overview = undefined;
        this.boundaries.clear();
        this.title.textContent = `${msg.file.split(/[\\/]/).pop() ?? msg.file} · ${int(msg.turns)} turns`;
        this.title.setAttribute('title', msg.file);
        this.list.setTotal(msg.turns);
        this.post({ type: 'requestOverview', requestId: this.id('overview') });
        {
          const line = msg.selectLine ?? this.state.line;
          this.needFirstRow = line === undefined;
          if (line !== undefined) this.selectTurn(line, false);
          else this.setStatus(msg.turns ? 'Loading…' : 'This log has no turns.');
        }
        return;
      case 'logClosed':
        this.file = undefined;
        this.detail = undefined;
        this.conversation = undefined;
        this.title.textContent = 'No log open';
        this.list.setTotal(0);
        setChildren(this.turnBody, h('p', { class: 'empty' }, 'Open a Spillway log (.jsonl) in the editor to see each turn’s ledger here.'));
        setChildren(this.overviewBody);
        return;
      case 'turns':
        this.list.setPage(msg.offset, msg.total, msg.rows);
        if (this.needFirstRow && msg.offset === 0 && msg.rows[0]) {
          this.needFirstRow = false;
          this.selectTurn(msg.rows[0].line, false);
        }
        return;
      case 'turn':
        if (msg.requestId !== this.latest.turn) return;
        this.detail = msg.detail;
        this.state.line = msg.detail.row.line;
        if (!this.state.segmentId || !msg.detail.segments.some((sg) => sg.id === this.state.segmentId)) this.state.segmentId = defaultSegment(msg.detail.segments)?.id;
        this.save();
        this.setStatus('');
        this.renderTurn();
        if (this.conversation?.id !== msg.detail.row.conversation) {
          this.conversation = undefined;
          this.post({ type: 'requestConversation', requestId: this.id('conversation'), conversation: msg.detail.row.conversation });
        }
        if (this.showBoundaries) this.askBoundaries();
        this.firstPaint();
        return;
      case 'conversation':
        if (msg.requestId !== this.latest.conversation) return;
        this.conversation = { id: msg.conversation, rows: msg.rows };
        this.renderTurn(['head', 'conv']);
        return;
      case 'overview':
        if (msg.requestId !== this.latest.overview) return;
        this.overview = msg.overview;
        setChildren(this.overviewBody, section('Log overview', 'h-overview', renderOverview({ overview: msg.overview, onJump: (line) => this.jump(line) })));
        return;
      case 'tokenBoundaries':
        this.boundaries.set(`${msg.line}:${msg.segmentId}`, msg.boundaries);
        if (this.detail?.row.line === msg.line && this.state.segmentId === msg.segmentId) this.renderTurn(['text']);
        return;
      case 'selectTurn':
        if (msg.line !== this.state.line || !this.detail) this.selectTurn(msg.line, false);
        return;
      case 'progress':
        this.setStatus(msg.total ? `${msg.label} ${pct(msg.done, msg.total)}` : `${msg.label} ${int(msg.done)}`);
        return;
      case 'error':
        this.setStatus(`⚠ ${msg.message}`);
        // A restored line that no longer exists: fall back to the first turn.
        if (msg.requestId !== undefined && msg.requestId === this.latest.turn && !this.detail && this.file) {
          this.needFirstRow = true;
          const first = this.list.rowAt(0);
          if (first && first.line !== this.state.line) this.selectTurn(first.line, false);
        }
        return;
    }
  }

  private setStatus(text: string): void {
    this.status.textContent = text;
  }

  private jump(line: number): void {
    this.showView('turn');
    this.selectTurn(line, true);
  }

  private askBoundaries(): void {
    const d = this.detail;
    const id = this.state.segmentId;
    if (!d || !id || this.boundaries.has(`${d.row.line}:${id}`)) return;
    this.post({ type: 'requestTokenBoundaries', requestId: this.id('boundaries'), line: d.row.line, segmentId: id });
  }

  private firstPaint(): void {
    if (this.firstPainted) return;
    this.firstPainted = true;
    const now = this.opts.now ?? (() => performance.now());
    const done = (): void => {
      const ms = Math.round((now() - (this.opts.scriptStart ?? 0)) * 10) / 10;
      performance.mark?.('spillway:first-paint');
      this.post({ type: 'metric', name: 'firstPaintMs', value: ms });
      this.opts.onFirstPaint?.(ms);
    };
    // After the next frame the turn view has been laid out and painted.
    if (typeof requestAnimationFrame === 'function') requestAnimationFrame(() => setTimeout(done, 0));
    else setTimeout(done, 0);
  }

  /**
   * Render the turn view from the current detail, conversation and selection. A new detail renders
   * everything; otherwise only the named parts are rebuilt (a conversation reply, a segment click or
   * the boundary option leave the rest of the view, and its layout, alone).
   */
  renderTurn(only?: ReadonlyArray<'head' | 'table' | 'text' | 'conv'>): void {
    const d = this.detail;
    if (!d) return;
    const r = d.row;
    // Rebuilt parts replace their nodes; remember where keyboard focus was to put it back.
    const active = document.activeElement;
    const focusedId = active && this.turnBody.contains(active) ? active.closest('tr[data-id]')?.getAttribute('data-id') : null;
    const focusedTimeline = Boolean(active && this.turnBody.contains(active) && active.closest('g.tl-turn'));
    const full = !only || this.renderedDetail !== d || !this.slots;
    if (full) {
      const bar = budgetBar(r, d.spill);
      const notes: Array<Node | null> = [];
      if (d.usage) notes.push(h('p', {}, `API-reported prompt tokens: ${int(d.usage.prompt)} (drift ${d.usage.drift >= 0 ? '+' : ''}${int(d.usage.drift)} against the ledger).`));
      if (d.notes.length) notes.push(h('ul', { class: 'notes' }, ...d.notes.map((n) => h('li', {}, n))));
      if (d.reply !== undefined) notes.push(h('details', {}, h('summary', {}, 'Reply'), h('p', { class: 'reply-text' }, d.reply)));
      this.slots = { head: h('div', { class: 'turn-head' }), table: h('div', { class: 'table-scroll' }), text: h('div', { class: 'text-slot' }), conv: h('div', { class: 'conv-slot' }) };
      setChildren(
        this.turnBody,
        this.slots.head,
        section('Budget', 'h-budget', renderBudgetBar(bar), renderBudgetTable(bar)),
        section('Segments', 'h-segments', h('p', { class: 'muted' }, `${d.segments.length} segments · ${r.clipped} clipped · ${r.dropped} dropped · ${int(d.spill)} tokens spilled`), this.slots.table),
        section('Segment text', 'h-text', this.boundaryToggle, this.slots.text),
        d.grounding ? renderGrounding({ grounding: d.grounding, onSelect: (id) => this.showSegmentText(id) }) : null,
        section('Conversation', 'h-conversation', this.slots.conv),
        notes.length ? section('Notes', 'h-notes', ...notes) : null,
      );
      this.renderedDetail = d;
    }
    const slots = this.slots!;
    const want = (part: 'head' | 'table' | 'text' | 'conv'): boolean => full || only!.includes(part);
    const conv = this.conversation?.id === r.conversation ? [...this.conversation.rows].sort((a, b) => a.turn - b.turn) : undefined;

    if (want('head')) {
      const stateText = r.state === 'ok' ? `${int(d.free)} free` : r.state === 'over-budget' ? `⚠ over budget by ${int(d.over)}` : '⚠ over budget before passages';
      const at = conv ? conv.findIndex((x) => x.line === r.line) : -1;
      const prev = at > 0 ? conv![at - 1] : undefined;
      const next = conv && at >= 0 && at < conv.length - 1 ? conv[at + 1] : undefined;
      const navButton = (label: string, target: TurnRow | undefined): HTMLElement => {
        const b = h('vscode-button', { secondary: true, disabled: !target, 'aria-label': label }, label);
        if (target) b.addEventListener('click', () => this.selectTurn(target.line, true));
        return b;
      };
      const reveal = h('vscode-button', { secondary: true }, 'Reveal in editor');
      reveal.addEventListener('click', () => this.post({ type: 'revealLine', line: r.line }));
      setChildren(
        slots.head,
        h('h2', { class: 'turn-title' }, `${r.conversation} · turn ${r.turn}`),
        h('span', { class: `state-badge state-${r.state}` }, stateText),
        h('p', { class: 'muted turn-meta' }, `line ${int(r.line)} · ${d.model} · ${d.encoding} · window ${int(r.window)} − reserve ${int(r.reserve)} = budget ${int(r.budget)} · plan ${d.plan} (fates from ${d.fatesFrom}) · framing ${d.framingProfile}`),
        h('div', { class: 'turn-nav' }, navButton('◀ Previous turn', prev), navButton('Next turn ▶', next), reveal),
      );
    }
    if (want('table'))
      setChildren(slots.table, renderSegmentTable({ segments: d.segments, selectedId: this.state.segmentId, sort: this.sort, onSelect: (id) => this.selectSegment(id, true), onSort: (sort) => this.resort(sort) }));
    if (want('text')) {
      const selected = d.segments.find((sg) => sg.id === this.state.segmentId);
      const boundaries = selected ? this.boundaries.get(`${r.line}:${selected.id}`) : undefined;
      this.boundaryToggle.checked = this.showBoundaries;
      setChildren(
        slots.text,
        selected ? renderPassage({ segment: selected, boundaries: this.showBoundaries ? boundaries : undefined, boundariesPending: this.showBoundaries && !boundaries }) : h('p', { class: 'muted' }, 'Select a segment in the table to see its text and cut point.'),
      );
      // Long texts scroll inside their box: bring the cut into view so it is seen without hunting.
      const box = slots.text.querySelector<HTMLElement>('.passage-text');
      const mark = box?.querySelector<HTMLElement>('.cut-mark');
      if (box && mark && box.scrollHeight > box.clientHeight) box.scrollTop = Math.max(0, mark.offsetTop - box.clientHeight / 2);
    }
    if (want('conv'))
      setChildren(slots.conv, conv ? renderTimeline({ conversation: r.conversation, rows: conv, selectedLine: r.line, onSelect: (line) => this.selectTurn(line, true) }) : h('p', { class: 'muted' }, 'Loading the conversation…'));
    if (focusedId) Array.from(this.turnBody.querySelectorAll<HTMLElement>('tr[data-id]')).find((tr) => tr.dataset.id === focusedId)?.focus();
    if (focusedTimeline) this.turnBody.querySelector<SVGGElement>('g.tl-turn[tabindex="0"]')?.focus();
  }

  /** A passage picked in the grounding section: select it and bring its cut view into sight. */
  private showSegmentText(id: string): void {
    this.selectSegment(id, true);
    this.slots?.text.scrollIntoView?.({ block: 'nearest' });
  }

  private resort(sort: SortState): void {
    this.sort = sort;
    this.renderTurn(['table']);
    this.turnBody.querySelector<HTMLElement>(`button[data-sort="${sort.key}"]`)?.focus();
  }
}

/** The segment to show when none is chosen: the first clipped passage (it has a cut), else rank 1. */
export function defaultSegment(segments: readonly SegmentView[]): SegmentView | undefined {
  const passages = segments.filter((sg) => sg.kind === 'passage');
  return passages.find((sg) => sg.fate === 'clipped') ?? [...passages].sort((a, b) => (a.rank ?? Infinity) - (b.rank ?? Infinity))[0];
}
