/**
 * The turn list of the whole log, virtualised: the DOM holds only the rows in view (plus a margin),
 * rows arrive from the host in pages (`requestTurns`), and at most MAX_PAGES pages are cached.
 * A listbox with aria-activedescendant: arrows, PageUp/PageDown, Home/End move, Enter selects.
 * Geometry uses CSSOM (`el.style.height/transform`), which the CSP allows (no style attributes).
 */
import type { TurnRow } from '../../extension/protocol/messages';
import { h } from './dom';
import { int, pct } from './format';
import { FATE_ICON } from './fate';

export const PAGE_SIZE = 200;
export const MAX_PAGES = 40;
const OVERSCAN = 8;
/** Rows assumed visible when the list has no layout yet (hidden tab, DOM tests). */
const FALLBACK_VISIBLE = 24;

export interface TurnListOptions {
  rowHeight: number;
  requestPage(offset: number, limit: number): void;
  onSelect(line: number): void;
}

export class TurnList {
  readonly element: HTMLElement;
  private readonly spacer: HTMLElement;
  private total = 0;
  private readonly pages = new Map<number, TurnRow[]>();
  private readonly pending = new Set<number>();
  private active = 0;
  private selectedLine: number | undefined;
  private frame = 0;
  /** Bumped whenever rows change (pages, total); with the visible range it keys what is on screen. */
  private version = 0;
  private shownKey = '';

  constructor(private readonly o: TurnListOptions) {
    this.spacer = h('div', { class: 'turn-list-spacer' });
    this.element = h('div', { class: 'turn-list', role: 'listbox', tabindex: 0, 'aria-label': 'Turns in log' }, this.spacer);
    this.element.addEventListener('scroll', () => this.schedule());
    this.element.addEventListener('keydown', (e) => this.onKey(e));
  }

  setTotal(total: number): void {
    this.total = total;
    this.version++;
    this.pages.clear();
    this.pending.clear();
    this.active = 0;
    this.spacer.style.height = `${total * this.o.rowHeight}px`;
    this.element.setAttribute('aria-label', `Turns in log (${int(total)})`);
    this.render();
  }

  /** A page reply from the host. */
  setPage(offset: number, total: number, rows: TurnRow[]): void {
    if (total !== this.total) this.setTotal(total);
    const p = Math.floor(offset / PAGE_SIZE);
    this.pending.delete(p);
    this.pages.set(p, rows);
    this.version++;
    // The selected turn may arrive after it was selected: keyboard movement starts from it.
    const sel = rows.findIndex((r) => r.line === this.selectedLine);
    if (sel >= 0) this.active = p * PAGE_SIZE + sel;
    this.evict(p);
    this.render();
  }

  setSelected(line: number | undefined): void {
    this.selectedLine = line;
    for (const [p, rows] of this.pages) {
      const i = rows.findIndex((r) => r.line === line);
      if (i >= 0) this.active = p * PAGE_SIZE + i;
    }
    this.render();
  }

  /** Row at a list index, when its page is loaded. */
  rowAt(index: number): TurnRow | undefined {
    return this.pages.get(Math.floor(index / PAGE_SIZE))?.[index % PAGE_SIZE];
  }

  get loadedPages(): number {
    return this.pages.size;
  }

  private schedule(): void {
    if (this.frame) return;
    const raf = typeof requestAnimationFrame === 'function' ? requestAnimationFrame : (f: () => void) => setTimeout(f, 16);
    this.frame = raf(() => {
      this.frame = 0;
      this.render();
    }) as unknown as number;
  }

  private visibleRange(): [number, number] {
    const rh = this.o.rowHeight;
    const visible = this.element.clientHeight > 0 ? Math.ceil(this.element.clientHeight / rh) : FALLBACK_VISIBLE;
    const first = Math.max(0, Math.floor(this.element.scrollTop / rh) - OVERSCAN);
    return [first, Math.min(this.total, first + visible + 2 * OVERSCAN)];
  }

  private evict(keep: number): void {
    if (this.pages.size <= MAX_PAGES) return;
    const far = [...this.pages.keys()].sort((a, b) => Math.abs(b - keep) - Math.abs(a - keep));
    for (const p of far.slice(0, this.pages.size - MAX_PAGES)) this.pages.delete(p);
  }

  render(): void {
    const [first, end] = this.visibleRange();
    // Same rows on screen (only the active/selected row moved): update attributes, keep the nodes.
    const key = `${first}:${end}:${this.version}`;
    if (key === this.shownKey) {
      for (const el of Array.from(this.spacer.children) as HTMLElement[]) {
        const i = Number(el.id.slice('turn-opt-'.length));
        el.classList.toggle('active', i === this.active);
        if (el.dataset.line) el.setAttribute('aria-selected', Number(el.dataset.line) === this.selectedLine ? 'true' : 'false');
      }
      this.element.setAttribute('aria-activedescendant', `turn-opt-${this.active}`);
      return;
    }
    this.shownKey = key;
    const rows: HTMLElement[] = [];
    for (let i = first; i < end; i++) {
      const p = Math.floor(i / PAGE_SIZE);
      if (!this.pages.has(p) && !this.pending.has(p)) {
        this.pending.add(p);
        this.o.requestPage(p * PAGE_SIZE, PAGE_SIZE);
      }
      rows.push(this.renderRow(i, this.rowAt(i)));
    }
    this.spacer.replaceChildren(...rows);
    if (this.total > 0) this.element.setAttribute('aria-activedescendant', `turn-opt-${this.active}`);
    else this.element.removeAttribute('aria-activedescendant');
  }

  private renderRow(i: number, r: TurnRow | undefined): HTMLElement {
    const attrs = { id: `turn-opt-${i}`, role: 'option', 'aria-posinset': i + 1, 'aria-setsize': this.total };
    let el: HTMLElement;
    if (!r) el = h('div', { ...attrs, class: 'turn-row loading', 'aria-selected': 'false' }, 'loading…');
    else {
      const lost = r.rank1Fate && r.rank1Fate !== 'kept';
      el = h(
        'div',
        { ...attrs, class: `turn-row${r.state !== 'ok' ? ' over' : ''}${i === this.active ? ' active' : ''}`, 'aria-selected': r.line === this.selectedLine ? 'true' : 'false', 'data-line': r.line },
        h('span', { class: 'tr-line' }, `L${r.line}`),
        h('span', { class: 'tr-conv' }, `${r.conversation} #${r.turn}`),
        h('span', { class: 'tr-used' }, `${int(r.used)} / ${int(r.budget)} (${pct(r.used, r.budget)})`),
        h('span', { class: 'tr-flags' }, r.state !== 'ok' ? '⚠ over ' : '', lost ? `${FATE_ICON[r.rank1Fate!]} rank-1 ${r.rank1Fate} ` : '', !lost && r.clipped ? `✂ ${r.clipped} clipped ` : '', !lost && r.dropped ? `✕ ${r.dropped} dropped` : ''),
      );
      el.addEventListener('click', () => {
        this.active = i;
        this.o.onSelect(r.line);
      });
    }
    el.style.transform = `translateY(${i * this.o.rowHeight}px)`;
    return el;
  }

  private onKey(e: KeyboardEvent): void {
    const pageRows = Math.max(1, Math.floor((this.element.clientHeight || FALLBACK_VISIBLE * this.o.rowHeight) / this.o.rowHeight) - 1);
    let next = this.active;
    if (e.key === 'ArrowDown') next++;
    else if (e.key === 'ArrowUp') next--;
    else if (e.key === 'PageDown') next += pageRows;
    else if (e.key === 'PageUp') next -= pageRows;
    else if (e.key === 'Home') next = 0;
    else if (e.key === 'End') next = this.total - 1;
    else if (e.key === 'Enter' || e.key === ' ') {
      e.preventDefault();
      const r = this.rowAt(this.active);
      if (r) this.o.onSelect(r.line);
      return;
    } else return;
    e.preventDefault();
    this.active = Math.max(0, Math.min(this.total - 1, next));
    this.scrollToIndex(this.active);
    this.render();
  }

  scrollToIndex(i: number): void {
    const rh = this.o.rowHeight;
    const viewH = this.element.clientHeight;
    if (viewH <= 0) {
      this.element.scrollTop = i * rh;
      return;
    }
    if (i * rh < this.element.scrollTop) this.element.scrollTop = i * rh;
    else if ((i + 1) * rh > this.element.scrollTop + viewH) this.element.scrollTop = (i + 1) * rh - viewH;
  }
}
