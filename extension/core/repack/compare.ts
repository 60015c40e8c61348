/**
 * Comparing two packings of the same turns (a log and its re-pack, or any two logs of the same
 * conversations): passages gained and lost, history turns dropped, evidence retention and reply
 * support, per turn and across the log.
 */
import type { Fate, LogIssue, LogRecord } from '../log/types';
import type { ReadItem } from '../log/reader';
import type { Ledger, SegmentLedger, TurnState } from '../audit/types';
import { Accountant } from '../tokens/accountant';
import { buildLedger, LedgerError, resolveEncoding } from '../audit/ledger';
import { evidenceOf, passageCounts, replyCounts, replySupportOf, type EvidenceBasis } from './evidence';
import type { SquadCounts } from '../analysis/textfacts';
import { CostAccumulator } from './cost';
import type { Prices } from './types';

export interface PassageChange {
  id: string;
  rank?: number;
  a: Fate;
  b: Fate;
  keptA: number;
  keptB: number;
}

export interface SideSummary {
  model: string;
  used: number;
  budget: number;
  state: TurnState;
  plan: string;
  encoding: string;
}

export interface EvidenceRetention {
  basis: EvidenceBasis;
  ids: string[];
  /** Exact tokens of the evidence passages under each side's encoding, and how many of them were sent. */
  tokensA: number;
  keptA: number;
  tokensB: number;
  keptB: number;
  /** kept / tokens (1 when the evidence is empty text). */
  retentionA: number;
  retentionB: number;
}

export interface TurnComparison {
  line: number;
  lineB: number;
  conversation: string;
  turn: number;
  a: SideSummary;
  b: SideSummary;
  /** Passages sent (kept or clipped) in b but dropped in a, and the reverse. */
  gained: string[];
  lost: string[];
  /** Every passage whose fate or kept tokens differ. */
  passages: PassageChange[];
  /** History turns (turn number, or segment id when unnumbered) sent whole in a and not in b, and the reverse. */
  historyDropped: (number | string)[];
  historyGained: (number | string)[];
  evidence: EvidenceRetention | null;
  replySupport: { a: number; b: number } | null;
  /** Any fate differs. */
  changed: boolean;
  /** Evidence retention or reply support went down. */
  worse: boolean;
  better: boolean;
}

const sentFate = (f: Fate): boolean => f !== 'dropped';

function keptText(record: LogRecord, seg: SegmentLedger): string {
  const s = record.segments.find((x) => x.id === seg.id);
  if (!s || seg.fate === 'dropped') return '';
  return seg.fate === 'kept' ? s.text : s.text.slice(0, seg.cut?.char ?? 0);
}

function historyStatus(l: Ledger, record: LogRecord): Map<number | string, boolean> {
  const out = new Map<number | string, boolean>();
  const turnOf = new Map(record.segments.map((s) => [s.id, s.turn]));
  for (const s of l.segments) {
    if (s.kind !== 'history') continue;
    const key = turnOf.get(s.id) ?? s.id;
    out.set(key, (out.get(key) ?? true) && s.fate === 'kept');
  }
  return out;
}

const side = (l: Ledger, spent?: number, state?: TurnState): SideSummary => ({ model: l.model, used: spent ?? l.used, budget: l.budget, state: state ?? l.state, plan: l.plan, encoding: l.encoding });

/**
 * Compares two ledgers of one turn. `record` gives the texts (reply, evidence marks, passages).
 * `extra` overrides what a plain ledger cannot know (fusion:L spends the sum of its windows).
 */
export function compareLedgers(a: Ledger, b: Ledger, record: LogRecord, extra: { spentA?: number; stateA?: TurnState; spentB?: number; stateB?: TurnState } = {}): TurnComparison {
  const byIdB = new Map(b.segments.map((s) => [s.id, s]));
  const gained: string[] = [];
  const lost: string[] = [];
  const passages: PassageChange[] = [];
  let changed = false;
  for (const sa of a.segments) {
    const sb = byIdB.get(sa.id);
    if (!sb) continue;
    if (sa.fate !== sb.fate || (sa.fate === 'clipped' && sa.cut?.char !== sb.cut?.char)) changed = true;
    if (sa.kind !== 'passage') continue;
    if (sentFate(sb.fate) && !sentFate(sa.fate)) gained.push(sa.id);
    if (sentFate(sa.fate) && !sentFate(sb.fate)) lost.push(sa.id);
    if (sa.fate !== sb.fate || sa.keptTokens !== sb.keptTokens) {
      const c: PassageChange = { id: sa.id, a: sa.fate, b: sb.fate, keptA: sa.keptTokens, keptB: sb.keptTokens };
      if (sa.rank !== undefined) c.rank = sa.rank;
      passages.push(c);
    }
  }
  const ha = historyStatus(a, record);
  const hb = historyStatus(b, record);
  const historyDropped = [...ha].filter(([k, v]) => v && hb.get(k) === false).map(([k]) => k);
  const historyGained = [...ha].filter(([k, v]) => !v && hb.get(k) === true).map(([k]) => k);

  let evidence: EvidenceRetention | null = null;
  const reply = replyCounts(record.reply);
  const ev = evidenceOf(record, reply);
  if (ev) {
    const byIdA = new Map(a.segments.map((s) => [s.id, s]));
    let tokensA = 0;
    let keptA = 0;
    let tokensB = 0;
    let keptB = 0;
    for (const id of ev.ids) {
      tokensA += byIdA.get(id)?.tokens ?? 0;
      keptA += byIdA.get(id)?.keptTokens ?? 0;
      tokensB += byIdB.get(id)?.tokens ?? 0;
      keptB += byIdB.get(id)?.keptTokens ?? 0;
    }
    evidence = { basis: ev.basis, ids: ev.ids, tokensA, keptA, tokensB, keptB, retentionA: tokensA === 0 ? 1 : keptA / tokensA, retentionB: tokensB === 0 ? 1 : keptB / tokensB };
  }
  const sent = (l: Ledger): SquadCounts[] => l.segments.filter((s) => s.kind === 'passage' && s.fate !== 'dropped').map((s) => passageCounts(keptText(record, s), s.fate === 'kept'));
  const ra = replySupportOf(reply, sent(a));
  const rb = replySupportOf(reply, sent(b));
  const support = ra === null || rb === null ? null : { a: ra, b: rb };

  const EPS = 1e-12;
  const dE = evidence ? evidence.retentionB - evidence.retentionA : 0;
  const dS = support ? support.b - support.a : 0;
  const worse = dE < -EPS || dS < -EPS;
  return {
    line: a.line,
    lineB: b.line,
    conversation: a.conversation,
    turn: a.turn,
    a: side(a, extra.spentA, extra.stateA),
    b: side(b, extra.spentB, extra.stateB),
    gained,
    lost,
    passages,
    historyDropped,
    historyGained,
    evidence,
    replySupport: support,
    changed,
    worse,
    better: !worse && (dE > EPS || dS > EPS),
  };
}

/** Order of the worse turns: biggest evidence loss first, then biggest reply-support loss, then most passages lost. */
export function worseFirst(x: TurnComparison, y: TurnComparison): number {
  const dE = (c: TurnComparison): number => (c.evidence ? c.evidence.retentionB - c.evidence.retentionA : 0);
  const dS = (c: TurnComparison): number => (c.replySupport ? c.replySupport.b - c.replySupport.a : 0);
  return dE(x) - dE(y) || dS(x) - dS(y) || y.lost.length - x.lost.length || x.line - y.line;
}

export interface ComparisonTotals {
  turns: number;
  changed: number;
  worse: number;
  better: number;
  passagesGained: number;
  passagesLost: number;
  historyTurnsDropped: number;
  historyTurnsGained: number;
  /** Turns with evidence (marked or best-supporting passage). */
  evidenceTurns: number;
  /** Σ kept / Σ tokens of evidence passages over those turns, per side. */
  evidenceRetentionA: number | null;
  evidenceRetentionB: number | null;
  /** Turns whose evidence was sent whole. */
  evidenceWholeA: number;
  evidenceWholeB: number;
  /** Mean reply support over turns with a reply. */
  replySupportA: number | null;
  replySupportB: number | null;
  tokensA: number;
  tokensB: number;
  costPer1000TurnsA?: number | null;
  costPer1000TurnsB?: number | null;
}

export class ComparisonTotalsBuilder {
  private t: ComparisonTotals = {
    turns: 0, changed: 0, worse: 0, better: 0, passagesGained: 0, passagesLost: 0, historyTurnsDropped: 0, historyTurnsGained: 0,
    evidenceTurns: 0, evidenceRetentionA: null, evidenceRetentionB: null, evidenceWholeA: 0, evidenceWholeB: 0, replySupportA: null, replySupportB: null, tokensA: 0, tokensB: 0,
  };
  private ev = { ta: 0, ka: 0, tb: 0, kb: 0 };
  private sup = { n: 0, a: 0, b: 0 };
  private costA: CostAccumulator;
  private costB: CostAccumulator;

  constructor(private readonly prices?: Prices) {
    this.costA = new CostAccumulator(prices);
    this.costB = new CostAccumulator(prices);
  }

  add(c: TurnComparison): void {
    const t = this.t;
    t.turns++;
    if (c.changed) t.changed++;
    if (c.worse) t.worse++;
    if (c.better) t.better++;
    t.passagesGained += c.gained.length;
    t.passagesLost += c.lost.length;
    t.historyTurnsDropped += c.historyDropped.length;
    t.historyTurnsGained += c.historyGained.length;
    if (c.evidence) {
      t.evidenceTurns++;
      this.ev.ta += c.evidence.tokensA;
      this.ev.ka += c.evidence.keptA;
      this.ev.tb += c.evidence.tokensB;
      this.ev.kb += c.evidence.keptB;
      if (c.evidence.keptA === c.evidence.tokensA) t.evidenceWholeA++;
      if (c.evidence.keptB === c.evidence.tokensB) t.evidenceWholeB++;
    }
    if (c.replySupport) {
      this.sup.n++;
      this.sup.a += c.replySupport.a;
      this.sup.b += c.replySupport.b;
    }
    t.tokensA += c.a.used;
    t.tokensB += c.b.used;
    this.costA.add(c.a.model, c.a.used);
    this.costB.add(c.b.model, c.b.used);
  }

  result(): ComparisonTotals {
    const out = { ...this.t };
    out.evidenceRetentionA = this.ev.ta === 0 ? null : this.ev.ka / this.ev.ta;
    out.evidenceRetentionB = this.ev.tb === 0 ? null : this.ev.kb / this.ev.tb;
    out.replySupportA = this.sup.n === 0 ? null : this.sup.a / this.sup.n;
    out.replySupportB = this.sup.n === 0 ? null : this.sup.b / this.sup.n;
    if (this.prices) {
      out.costPer1000TurnsA = this.costA.result().per1000Turns;
      out.costPer1000TurnsB = this.costB.result().per1000Turns;
    }
    return out;
  }
}

export interface CompareOptions {
  /** Pair records by (conversation, turn) — the default — or by their position in the file. */
  align?: 'key' | 'line';
  prices?: Prices;
  /** Keep this many worse turns (sorted); default 1,000. */
  maxWorse?: number;
  maxIssues?: number;
}

export interface CompareContext {
  accountant?: Accountant;
  signal?: AbortSignal;
  onProgress?: (done: number) => void;
  /** Receives every turn's comparison; when given they are not kept in the result (bounded memory). */
  onTurn?: (c: TurnComparison) => void;
}

export interface LogComparison {
  schema: 'spillway.compare/1';
  turns: TurnComparison[];
  /** The worse turns, worst first (at most `maxWorse`). */
  worse: TurnComparison[];
  totals: ComparisonTotals;
  /** Records of one log with no partner in the other. */
  unmatched: { a: number; b: number };
  issues: { a: LogIssue[]; b: LogIssue[] };
  malformed: { a: number; b: number };
}

export class CompareCancelled extends Error {
  constructor() {
    super('comparison cancelled');
  }
}

type Located = Extract<ReadItem, { record: LogRecord }>;

/** Spent tokens of a packed record: the prompt, or for a fusion re-pack the sum of its windows. */
function spentOf(record: LogRecord, l: Ledger): { spent: number; state?: TurnState } {
  const f = record.fusion as { used?: unknown } | undefined;
  if (f && typeof f.used === 'number') return { spent: f.used, state: l.state === 'over-before-passages' ? l.state : 'ok' };
  return { spent: l.used };
}

/**
 * Streams two logs side by side. With `align: 'key'` records pair by (conversation, turn, n-th
 * occurrence); records waiting for a partner are held until it comes, so logs in the same order
 * (a log and its re-pack) use bounded memory.
 */
export async function compareLogs(
  aItems: AsyncIterable<ReadItem> | Iterable<ReadItem>,
  bItems: AsyncIterable<ReadItem> | Iterable<ReadItem>,
  opts: CompareOptions = {},
  ctx: CompareContext = {},
): Promise<LogComparison> {
  const acct = ctx.accountant ?? (await Accountant.create());
  const align = opts.align ?? 'key';
  const maxWorse = opts.maxWorse ?? 1000;
  const maxIssues = opts.maxIssues ?? 10_000;
  const result: LogComparison = { schema: 'spillway.compare/1', turns: [], worse: [], totals: undefined as unknown as ComparisonTotals, unmatched: { a: 0, b: 0 }, issues: { a: [], b: [] }, malformed: { a: 0, b: 0 } };
  const totals = new ComparisonTotalsBuilder(opts.prices);
  let worse: TurnComparison[] = [];
  const pending = { a: new Map<string, Located>(), b: new Map<string, Located>() };
  const seen = { a: new Map<string, number>(), b: new Map<string, number>() };
  let done = 0;

  const ledgerOf = async (x: Located, which: 'a' | 'b'): Promise<Ledger | null> => {
    try {
      await acct.encoder(resolveEncoding(x.record, {}));
      return buildLedger(x, {}, acct);
    } catch (e) {
      if (!(e instanceof LedgerError)) throw e;
      result.malformed[which]++;
      if (result.issues[which].length < maxIssues) result.issues[which].push({ line: x.line, column: 1, code: 'unknown-encoding', message: e.message });
      return null;
    }
  };
  const pair = async (xa: Located, xb: Located): Promise<void> => {
    const la = await ledgerOf(xa, 'a');
    const lb = await ledgerOf(xb, 'b');
    if (!la || !lb) return;
    const sa = spentOf(xa.record, la);
    const sb = spentOf(xb.record, lb);
    const c = compareLedgers(la, lb, xa.record, { spentA: sa.spent, stateA: sa.state, spentB: sb.spent, stateB: sb.state });
    totals.add(c);
    if (ctx.onTurn) ctx.onTurn(c);
    else result.turns.push(c);
    if (c.worse) {
      worse.push(c);
      if (worse.length > 2 * maxWorse) worse = worse.sort(worseFirst).slice(0, maxWorse);
    }
    if (++done % 1000 === 0) {
      ctx.onProgress?.(done);
      await new Promise((r) => setImmediate(r));
    }
  };
  const keyOf = (x: Located, which: 'a' | 'b', index: number): string => {
    if (align === 'line') return String(index);
    const k = `${x.record.conversation}\u0000${x.record.turn}`;
    const n = (seen[which].get(k) ?? 0) + 1;
    seen[which].set(k, n);
    return `${k}\u0000${n}`;
  };
  const take = async (x: ReadItem | undefined, which: 'a' | 'b', index: number): Promise<boolean> => {
    if (!x) return false;
    if ('issue' in x) {
      result.malformed[which]++;
      if (result.issues[which].length < maxIssues) result.issues[which].push(x.issue);
      return true;
    }
    const other = which === 'a' ? 'b' : 'a';
    const key = keyOf(x, which, index);
    const partner = pending[other].get(key);
    if (partner) {
      pending[other].delete(key);
      if (which === 'a') await pair(x, partner);
      else await pair(partner, x);
    } else pending[which].set(key, x);
    return true;
  };

  const ia = (Symbol.asyncIterator in aItems ? aItems[Symbol.asyncIterator]() : (aItems as Iterable<ReadItem>)[Symbol.iterator]()) as AsyncIterator<ReadItem> | Iterator<ReadItem>;
  const ib = (Symbol.asyncIterator in bItems ? bItems[Symbol.asyncIterator]() : (bItems as Iterable<ReadItem>)[Symbol.iterator]()) as AsyncIterator<ReadItem> | Iterator<ReadItem>;
  let moreA = true;
  let moreB = true;
  let na = 0;
  let nb = 0;
  while (moreA || moreB) {
    if (ctx.signal?.aborted) throw new CompareCancelled();
    if (moreA) {
      const r = await ia.next();
      const x = r.done ? undefined : r.value;
      moreA = await take(x, 'a', x && !('issue' in x) ? na++ : -1);
    }
    if (moreB) {
      const r = await ib.next();
      const x = r.done ? undefined : r.value;
      moreB = await take(x, 'b', x && !('issue' in x) ? nb++ : -1);
    }
  }
  result.unmatched = { a: pending.a.size, b: pending.b.size };
  result.worse = worse.sort(worseFirst).slice(0, maxWorse);
  result.totals = totals.result();
  ctx.onProgress?.(done);
  return result;
}
