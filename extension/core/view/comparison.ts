/**
 * The re-pack comparison as the panel sees it: a bounded, worse-first list of compact rows built
 * while the re-pack streams (`ComparisonCollector`), pages of it, and one turn's two packings side
 * by side with each segment's difference marked. Pure: the host injects the totals builder and
 * reads the record lines.
 */
import type { TurnComparison, ComparisonTotals } from '../repack/compare';
import type { SegmentView, TurnDetail } from '../../protocol/messages';
import type { ComparisonRow, ComparisonSegment, ComparisonSide, ComparisonTurnView, ComparisonVerdict, SegmentDiff } from '../../protocol/comparison';
import { utf8Length } from '../text/utf8';
export { utf8Length };

/** Passage ids listed per row (the count stays exact). */
export const ROW_IDS = 8;
/** Rows the host keeps by default; the summary says how many turns were left out. */
export const MAX_ROWS = 20_000;
export const MAX_COMPARISON_PAGE = 500;
/** Characters of segment text sent per segment in the side-by-side view. */
export const PREVIEW_CHARS = 240;

/** Where a row's two records sit: byte offsets of their lines in the source and the re-packed log. */
export interface RowLocation {
  offsetA: number;
  offsetB: number;
}

export interface StoredRow {
  row: ComparisonRow;
  loc: RowLocation;
}

export function verdictOf(c: Pick<TurnComparison, 'worse' | 'better' | 'changed'>): ComparisonVerdict {
  return c.worse ? 'worse' : c.better ? 'better' : c.changed ? 'changed' : 'same';
}

export function toComparisonRow(c: TurnComparison, lineB: number): ComparisonRow {
  const row: ComparisonRow = {
    line: c.line,
    lineB,
    conversation: c.conversation,
    turn: c.turn,
    verdict: verdictOf(c),
    usedA: c.a.used,
    usedB: c.b.used,
    budgetA: c.a.budget,
    budgetB: c.b.budget,
    stateA: c.a.state,
    stateB: c.b.state,
    lost: c.lost.slice(0, ROW_IDS),
    lostCount: c.lost.length,
    gained: c.gained.slice(0, ROW_IDS),
    gainedCount: c.gained.length,
    historyDropped: c.historyDropped.length,
    historyGained: c.historyGained.length,
    evidenceA: c.evidence ? c.evidence.retentionA : null,
    evidenceB: c.evidence ? c.evidence.retentionB : null,
    supportA: c.replySupport ? c.replySupport.a : null,
    supportB: c.replySupport ? c.replySupport.b : null,
  };
  if (c.evidence) row.evidenceBasis = c.evidence.basis;
  return row;
}

const VERDICT_ORDER: Record<ComparisonVerdict, number> = { worse: 0, changed: 1, better: 2, same: 3 };
const dEvidence = (r: ComparisonRow): number => (r.evidenceA !== null && r.evidenceB !== null ? r.evidenceB - r.evidenceA : 0);
const dSupport = (r: ComparisonRow): number => (r.supportA !== null && r.supportB !== null ? r.supportB - r.supportA : 0);

/**
 * List order: worse turns first in the core's `worseFirst` order (biggest evidence loss, then
 * biggest reply-support loss, then most passages lost, then line); then changed, better and
 * unchanged turns, each by passages lost (most first), then line.
 */
export function compareRows(x: ComparisonRow, y: ComparisonRow): number {
  const v = VERDICT_ORDER[x.verdict] - VERDICT_ORDER[y.verdict];
  if (v) return v;
  if (x.verdict === 'worse') return dEvidence(x) - dEvidence(y) || dSupport(x) - dSupport(y) || y.lostCount - x.lostCount || x.line - y.line;
  return y.lostCount - x.lostCount || x.line - y.line;
}

/** What the collector needs of the core's `ComparisonTotalsBuilder`. */
export interface TotalsSink {
  add(c: TurnComparison): void;
  result(): ComparisonTotals;
}

/**
 * Collects rows while a re-pack streams. Memory is bounded: past 2 × `max` rows the list is sorted
 * and cut back to `max`, so the turns that matter most (worse first) stay and the rest are counted
 * in `omitted`. Totals cover every turn.
 */
export class ComparisonCollector {
  private rows: StoredRow[] = [];
  private sorted = true;
  private cut = 0;

  constructor(
    private readonly totals: TotalsSink,
    private readonly max = MAX_ROWS,
  ) {}

  add(c: TurnComparison, lineB: number, loc: RowLocation): void {
    this.totals.add(c);
    this.rows.push({ row: toComparisonRow(c, lineB), loc });
    this.sorted = false;
    if (this.rows.length >= 2 * this.max) this.trim();
  }

  private trim(): void {
    this.rows.sort((a, b) => compareRows(a.row, b.row));
    this.sorted = true;
    if (this.rows.length > this.max) {
      this.cut += this.rows.length - this.max;
      this.rows.length = this.max;
    }
  }

  /** The finished list (sorted, at most `max` rows) and the totals over every turn. */
  finish(): ComparisonStore {
    if (!this.sorted || this.rows.length > this.max) this.trim();
    return new ComparisonStore(this.rows, this.totals.result(), this.cut);
  }
}

/** A finished comparison: rows in list order, paged to the webview, and found by source line. */
export class ComparisonStore {
  private readonly byLine = new Map<number, number>();

  constructor(
    readonly rows: readonly StoredRow[],
    readonly totals: ComparisonTotals,
    readonly omitted: number,
  ) {
    rows.forEach((r, i) => this.byLine.set(r.row.line, i));
  }

  /** One page; offset and limit are clamped (limit to MAX_COMPARISON_PAGE). */
  page(offset: number, limit: number): { offset: number; total: number; rows: ComparisonRow[] } {
    const total = this.rows.length;
    const from = Math.min(Math.max(0, Math.floor(offset)), total);
    const to = Math.min(total, from + Math.min(Math.max(0, Math.floor(limit)), MAX_COMPARISON_PAGE));
    return { offset: from, total, rows: this.rows.slice(from, to).map((r) => r.row) };
  }

  at(line: number): StoredRow | undefined {
    const i = this.byLine.get(line);
    return i === undefined ? undefined : this.rows[i];
  }
}


/**
 * Ties each comparison the re-pack reports to where its two records sit: the source record being
 * packed (the reader item last passed through `items`) and the output line about to be written
 * (`repackLines` reports a record's comparison before writing its new line).
 */
export class RepackTracker {
  /** Bytes and lines written to the output so far. */
  bytes = 0;
  lines = 0;
  private current = { line: 0, offset: 0 };

  constructor(private readonly collector: ComparisonCollector) {}

  async *items<T>(source: AsyncIterable<T>): AsyncGenerator<T> {
    for await (const item of source) {
      const located = item as { line?: unknown; offset?: unknown; record?: unknown };
      if (located.record !== undefined && typeof located.line === 'number' && typeof located.offset === 'number') this.current = { line: located.line, offset: located.offset };
      yield item;
    }
  }

  /** Call with every output line (newline included) as it is written. */
  wrote(text: string): void {
    this.bytes += utf8Length(text);
    for (let i = text.indexOf('\n'); i >= 0; i = text.indexOf('\n', i + 1)) this.lines++;
  }

  readonly onComparison = (c: TurnComparison): void => {
    this.collector.add(c, this.lines + 1, { offsetA: this.current.offset, offsetB: this.bytes });
  };
}

const sent = (f: SegmentView['fate'] | undefined): boolean => f !== undefined && f !== 'dropped';

/** How segment `mine` (of this side) differs from `other` (the same id on the other side). */
export function segmentDiff(side: 'a' | 'b', mine: SegmentView, other: SegmentView | undefined): SegmentDiff {
  if (!other) return side === 'a' ? 'only-a' : 'only-b';
  const [a, b] = side === 'a' ? [mine, other] : [other, mine];
  if (sent(a.fate) && !sent(b.fate)) return 'lost';
  if (!sent(a.fate) && sent(b.fate)) return 'gained';
  if (b.keptTokens < a.keptTokens) return 'cut-more';
  if (b.keptTokens > a.keptTokens) return 'cut-less';
  return 'same';
}

function sideOf(which: 'a' | 'b', d: TurnDetail, other: TurnDetail): ComparisonSide {
  const otherById = new Map<string, SegmentView>();
  for (const s of other.segments) if (!otherById.has(s.id)) otherById.set(s.id, s);
  const segments = d.segments.map((s): ComparisonSegment => {
    const seg: ComparisonSegment = {
      id: s.id,
      kind: s.kind,
      tokens: s.tokens,
      keptTokens: s.keptTokens,
      fate: s.fate,
      diff: segmentDiff(which, s, otherById.get(s.id)),
      preview: s.text.length > PREVIEW_CHARS ? `${s.text.slice(0, PREVIEW_CHARS)}…` : s.text,
    };
    if (s.rank !== undefined) seg.rank = s.rank;
    if (s.cut) seg.cut = { ...s.cut };
    return seg;
  });
  const r = d.row;
  return { line: r.line, model: d.model, encoding: d.encoding, plan: d.plan, window: r.window, reserve: r.reserve, budget: r.budget, used: r.used, state: r.state, segments };
}

/** The two packings of one turn side by side, each segment's difference marked from its side. */
export function comparisonTurnView(generation: number, row: ComparisonRow, a: TurnDetail, b: TurnDetail): ComparisonTurnView {
  return { generation, row, a: sideOf('a', a, b), b: sideOf('b', b, a) };
}

/** "budget 4,096 · plan evidence-first · encoding kept" for the summary line. */
export function describeRepack(o: { budget?: number; plan?: string; encoding?: string }): string {
  const n = (x: number): string => new Intl.NumberFormat('en-US').format(x);
  return [
    o.budget !== undefined ? `budget ${n(o.budget)}` : 'budget kept',
    o.plan ? `plan ${o.plan}` : 'each record’s own plan',
    o.encoding ? `encoding ${o.encoding}` : 'encoding kept',
  ].join(' · ');
}
