/**
 * The Compare view: the last re-pack's totals, its turns worse first (paged from the host), and one
 * turn's two packings side by side with every difference marked by icon and word (never colour
 * alone). Texts come from logs and are untrusted: they are only ever set as text.
 */
import type { ComparisonRow, ComparisonSegment, ComparisonSide, ComparisonSummary, ComparisonTurnView, HostMessage, SegmentDiff, WebviewMessage } from '../../extension/protocol/messages';
import { h, setChildren } from './dom';
import { fateBadge } from './fate';
import { int, ratioPct } from './format';

export const COMPARE_PAGE = 200;

const VERDICT: Record<ComparisonRow['verdict'], { icon: string; word: string }> = {
  worse: { icon: '▼', word: 'worse' },
  better: { icon: '▲', word: 'better' },
  changed: { icon: '≠', word: 'changed' },
  same: { icon: '=', word: 'same' },
};

export const DIFF_LABEL: Record<SegmentDiff, { icon: string; word: string } | undefined> = {
  lost: { icon: '✕', word: 'lost' },
  gained: { icon: '＋', word: 'gained' },
  'cut-more': { icon: '✂', word: 'cut more' },
  'cut-less': { icon: '↗', word: 'cut less' },
  same: undefined,
  'only-a': { icon: '◐', word: 'only before' },
  'only-b': { icon: '◑', word: 'only after' },
};

const ratio = (x: number | null | undefined): string => (x === null || x === undefined ? '–' : ratioPct(x));
const arrow = (a: string, b: string): string => `${a} → ${b}`;
const ids = (shown: string[], count: number): string => (count === 0 ? '' : `${shown.join(' ')}${count > shown.length ? ` +${count - shown.length}` : ''}`);

function icon(text: string): HTMLElement {
  return h('span', { class: 'fate-icon', 'aria-hidden': 'true' }, text);
}

export function renderComparisonSummary(s: ComparisonSummary): HTMLElement {
  const t = s.totals;
  const perTurn = (x: number): string => (t.turns ? int(Math.round(x / t.turns)) : '–');
  const stat = (label: string, value: string, warn = false): HTMLElement =>
    h('div', { class: `stat${warn ? ' stat-warn' : ''}` }, h('dt', {}, label), h('dd', {}, warn ? icon('⚠ ') : null, value));
  const stats = h(
    'dl',
    { class: 'stats', 'aria-label': 'Re-pack totals' },
    stat('turns compared', int(t.turns)),
    stat('changed', int(t.changed)),
    stat('worse', int(t.worse), t.worse > 0),
    stat('better', int(t.better)),
    stat('passages lost', int(t.passagesLost), t.passagesLost > 0),
    stat('passages gained', int(t.passagesGained)),
    stat('history turns dropped', int(t.historyTurnsDropped)),
    stat('evidence retention', arrow(ratio(t.evidenceRetentionA), ratio(t.evidenceRetentionB))),
    stat('evidence sent whole', arrow(int(t.evidenceWholeA), int(t.evidenceWholeB)) + ` of ${int(t.evidenceTurns)} turns`),
    stat('reply support', arrow(ratio(t.replySupportA), ratio(t.replySupportB))),
    stat('tokens per turn', arrow(perTurn(t.tokensA), perTurn(t.tokensB))),
    ...(t.costPer1000TurnsA !== undefined ? [stat('input cost per 1,000 turns', arrow(money(t.costPer1000TurnsA), money(t.costPer1000TurnsB)))] : []),
  );
  return h(
    'div',
    { class: 'compare-summary' },
    h('p', { class: 'compare-files' }, h('span', { class: 'muted' }, 'before '), s.source, h('br'), h('span', { class: 'muted' }, 'after '), s.target),
    h('p', { class: 'muted' }, `${s.options} · ${s.seconds.toFixed(1)} s${s.malformed ? ` · ${int(s.malformed)} malformed line(s), ${int(s.copiedVerbatim)} copied as they were` : ''}`),
    stats,
    s.omitted ? h('p', { class: 'muted' }, `${int(s.omitted)} unchanged or less affected turns are not listed (the list keeps ${int(s.rows)}, worse first); the totals count every turn.`) : null,
    h('p', { class: 'muted privacy-note' }, 'The re-packed log holds the same personal data as the source.'),
  );
}

function money(x: number | null | undefined): string {
  return x === null || x === undefined ? '–' : x.toFixed(4);
}

/** One list row as cells; a button-like row (Enter/Space/click opens the turn). */
export function comparisonRowCells(r: ComparisonRow): Array<string | HTMLElement> {
  const v = VERDICT[r.verdict];
  return [
    h('span', { class: `verdict verdict-${r.verdict}` }, icon(`${v.icon} `), v.word),
    `${r.conversation} · turn ${r.turn}`,
    r.lostCount ? h('span', { class: 'diff-lost' }, icon('✕ '), `${int(r.lostCount)} lost: ${ids(r.lost, r.lostCount)}`) : '—',
    r.gainedCount ? h('span', { class: 'diff-gained' }, icon('＋ '), `${int(r.gainedCount)} gained: ${ids(r.gained, r.gainedCount)}`) : '—',
    r.historyDropped ? `${int(r.historyDropped)} dropped` : '—',
    r.evidenceA === null ? '—' : arrow(ratio(r.evidenceA), ratio(r.evidenceB)),
    r.supportA === null ? '—' : arrow(ratio(r.supportA), ratio(r.supportB)),
    arrow(int(r.usedA), int(r.usedB)),
  ];
}

const HEADS = ['Verdict', 'Turn', 'Passages lost', 'Passages gained', 'History', 'Evidence kept', 'Reply support', 'Tokens'];

export interface RowsOptions {
  rows: readonly ComparisonRow[];
  total: number;
  selectedLine?: number;
  onSelect(line: number): void;
  onMore?(): void;
}

export function renderComparisonRows(o: RowsOptions): HTMLElement {
  const body = h('tbody');
  const trs: HTMLElement[] = [];
  o.rows.forEach((r, i) => {
    const tr = h(
      'tr',
      { class: `cmp-row${r.line === o.selectedLine ? ' selected' : ''}`, tabindex: r.line === o.selectedLine || (o.selectedLine === undefined && i === 0) ? 0 : -1, 'data-line': r.line, 'aria-selected': r.line === o.selectedLine ? 'true' : 'false' },
      ...comparisonRowCells(r).map((c) => h('td', {}, c)),
    );
    tr.addEventListener('click', () => o.onSelect(r.line));
    tr.addEventListener('keydown', (e) => {
      if (e.key === 'Enter' || e.key === ' ') {
        e.preventDefault();
        o.onSelect(r.line);
      } else if (e.key === 'ArrowDown' || e.key === 'ArrowUp') {
        e.preventDefault();
        const next = trs[i + (e.key === 'ArrowDown' ? 1 : -1)];
        if (next) {
          tr.setAttribute('tabindex', '-1');
          next.setAttribute('tabindex', '0');
          next.focus();
        }
      }
    });
    trs.push(tr);
    body.appendChild(tr);
  });
  const table = h(
    'table',
    { class: 'compare-table', role: 'grid', 'aria-label': 'Turns, worse first' },
    h('caption', { class: 'muted' }, `${int(o.rows.length)} of ${int(o.total)} listed turns, worse first. Enter opens a turn’s two packings.`),
    h('thead', {}, h('tr', {}, ...HEADS.map((x) => h('th', { scope: 'col' }, x)))),
    body,
  );
  let more: HTMLElement | null = null;
  if (o.onMore && o.rows.length < o.total) {
    more = h('vscode-button', { secondary: true }, `Show ${int(Math.min(COMPARE_PAGE, o.total - o.rows.length))} more`);
    more.addEventListener('click', () => o.onMore!());
  }
  return h('div', { class: 'table-scroll' }, table, more);
}

function diffCell(d: SegmentDiff): HTMLElement | string {
  const l = DIFF_LABEL[d];
  return l ? h('span', { class: `diff diff-${d}` }, icon(`${l.icon} `), l.word) : '—';
}

function sideTable(title: string, side: ComparisonSide): HTMLElement {
  const rows = side.segments.map((sg: ComparisonSegment) =>
    h(
      'tr',
      { class: `seg-row${sg.diff !== 'same' ? ` changed diff-row-${sg.diff}` : ''}`, 'data-id': sg.id },
      h('td', {}, sg.id),
      h('td', {}, sg.kind),
      h('td', { class: 'num' }, sg.rank === undefined ? '–' : String(sg.rank)),
      h('td', {}, fateBadge(sg.fate)),
      h('td', { class: 'num' }, `${int(sg.keptTokens)} / ${int(sg.tokens)}`),
      h('td', {}, diffCell(sg.diff)),
      h('td', { class: 'preview' }, sg.preview),
    ),
  );
  const state = side.state === 'ok' ? `${int(side.used)} of ${int(side.budget)} used` : side.state === 'over-budget' ? `⚠ over budget: ${int(side.used)} of ${int(side.budget)}` : '⚠ over budget before passages';
  return h(
    'section',
    { class: 'compare-side', 'aria-label': title },
    h('h3', {}, title),
    h('p', { class: 'muted' }, `line ${int(side.line)} · window ${int(side.window)} − reserve ${int(side.reserve)} = budget ${int(side.budget)} · plan ${side.plan} · ${side.encoding} · ${state}`),
    h(
      'div',
      { class: 'table-scroll' },
      h('table', { class: 'compare-segments' }, h('thead', {}, h('tr', {}, ...['Segment', 'Kind', 'Rank', 'Fate', 'Kept / tokens', 'Difference', 'Text'].map((x) => h('th', { scope: 'col' }, x)))), h('tbody', {}, ...rows)),
    ),
  );
}

export function renderComparisonTurn(v: ComparisonTurnView): HTMLElement {
  const r = v.row;
  const lost = v.a.segments.filter((s) => s.diff === 'lost' && s.kind === 'passage').map((s) => s.id);
  const history = v.a.segments.filter((s) => s.diff === 'lost' && s.kind === 'history').length;
  return h(
    'div',
    { class: 'compare-turn' },
    h('h3', {}, `${r.conversation} · turn ${r.turn}`),
    h('p', {}, h('span', { class: `verdict verdict-${r.verdict}` }, icon(`${VERDICT[r.verdict].icon} `), VERDICT[r.verdict].word), lost.length ? ` · passages lost: ${lost.join(', ')}` : ' · no passage lost', history ? ` · ${int(history)} history segment(s) lost` : ''),
    h('div', { class: 'compare-sides' }, sideTable('Before (source log)', v.a), sideTable('After (re-packed log)', v.b)),
  );
}

export interface CompareViewOptions {
  post(m: WebviewMessage): void;
  nextId(): number;
  /** Switch the panel to this view (a new re-pack just finished). */
  reveal(): void;
}

/** The Compare tab's controller: holds the summary, the loaded rows and the open turn. */
export class CompareView {
  readonly element: HTMLElement;
  private readonly summaryEl: HTMLElement;
  private readonly listEl: HTMLElement;
  private readonly turnEl: HTMLElement;
  private summary: ComparisonSummary | undefined;
  private rows: ComparisonRow[] = [];
  private total = 0;
  private pageId = -1;
  private turnId = -1;
  private selected: number | undefined;

  constructor(private readonly opts: CompareViewOptions) {
    this.summaryEl = h('div', {}, h('p', { class: 'empty' }, 'No re-pack yet. Run “Spillway: Re-pack Log Under a New Budget…” to see which turns lose their evidence.'));
    this.listEl = h('div');
    this.turnEl = h('div', { class: 'compare-turn-slot', 'aria-live': 'polite' });
    this.element = h(
      'div',
      { class: 'compare-view', role: 'region', 'aria-label': 'Re-pack comparison', 'data-view': 'compare' },
      h('section', { class: 'card', 'aria-labelledby': 'h-compare' }, h('h2', { id: 'h-compare' }, 'Re-pack comparison'), this.summaryEl),
      h('section', { class: 'card', 'aria-labelledby': 'h-compare-turns' }, h('h2', { id: 'h-compare-turns' }, 'Turns, worse first'), this.listEl),
      h('section', { class: 'card', 'aria-labelledby': 'h-compare-turn' }, h('h2', { id: 'h-compare-turn' }, 'Both packings of the turn'), this.turnEl),
    );
  }

  /** Takes the messages meant for this view; returns false for every other message. */
  handle(msg: HostMessage): boolean {
    switch (msg.type) {
      case 'comparisonReady':
        this.summary = msg.summary;
        this.rows = [];
        this.total = msg.summary.rows;
        this.selected = undefined;
        setChildren(this.summaryEl, renderComparisonSummary(msg.summary));
        setChildren(this.listEl, h('p', { class: 'muted' }, 'Loading…'));
        setChildren(this.turnEl, h('p', { class: 'muted' }, 'Select a turn to see both packings side by side.'));
        this.requestPage(0);
        if (msg.reveal) this.opts.reveal();
        return true;
      case 'comparisonPage':
        if (msg.requestId !== this.pageId || msg.generation !== this.summary?.generation) return true;
        this.rows = msg.offset === 0 ? [...msg.rows] : [...this.rows.slice(0, msg.offset), ...msg.rows];
        this.total = msg.total;
        this.renderRows();
        if (this.selected === undefined && this.rows[0]) this.select(this.rows[0].line, false);
        return true;
      case 'comparisonTurn':
        if (msg.requestId !== this.turnId || msg.view.generation !== this.summary?.generation) return true;
        setChildren(this.turnEl, renderComparisonTurn(msg.view));
        return true;
      case 'error':
        if (msg.requestId === undefined || (msg.requestId !== this.pageId && msg.requestId !== this.turnId)) return false;
        setChildren(msg.requestId === this.pageId ? this.listEl : this.turnEl, h('p', { class: 'muted' }, `⚠ ${msg.message}`));
        return true;
      default:
        return false;
    }
  }

  private requestPage(offset: number): void {
    this.pageId = this.opts.nextId();
    this.opts.post({ type: 'requestComparisonPage', requestId: this.pageId, offset, limit: COMPARE_PAGE });
  }

  private select(line: number, focus: boolean): void {
    this.selected = line;
    this.renderRows();
    if (focus) this.listEl.querySelector<HTMLElement>(`tr[data-line="${line}"]`)?.focus();
    this.turnId = this.opts.nextId();
    setChildren(this.turnEl, h('p', { class: 'muted' }, 'Loading…'));
    this.opts.post({ type: 'requestComparisonTurn', requestId: this.turnId, line });
  }

  private renderRows(): void {
    if (this.total === 0) {
      setChildren(this.listEl, h('p', { class: 'muted' }, 'The log has no turns to compare.'));
      return;
    }
    setChildren(this.listEl, renderComparisonRows({ rows: this.rows, total: this.total, selectedLine: this.selected, onSelect: (l) => this.select(l, true), onMore: () => this.requestPage(this.rows.length) }));
  }
}
