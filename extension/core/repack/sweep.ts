/**
 * Sweep: pack every record under each budget × plan (× k, the number of best-ranked passages that
 * are candidates) and report evidence retention and tokens spent per option — one pass over the
 * log, every option per record, so memory holds one record and the table.
 */
import type { LogIssue, LogRecord } from '../log/types';
import type { ReadItem } from '../log/reader';
import { Accountant } from '../tokens/accountant';
import { LedgerError, resolveEncoding } from '../audit/ledger';
import { parsePlan } from '../pack/plans';
import { withTop } from '../pack/plans/spec';
import { repackRecord, type RecordOutcome } from './pack';
import { evidenceOf } from './evidence';
import { CostAccumulator } from './cost';
import type { Prices } from './types';

export interface SweepOptions {
  budgets: number[];
  plans: string[];
  /** Passage counts: each plan runs with `+top:k` for each k. */
  ks?: number[];
  reserve?: number;
  encoding?: string;
  prices?: Prices;
}

export interface SweepCell {
  budget: number;
  plan: string;
  k: number | null;
  turns: number;
  /** Exact tokens spent, summed, and per turn. */
  tokens: number;
  meanTokens: number;
  evidenceTurns: number;
  /** Σ kept / Σ tokens of evidence passages (null: no turn has evidence). */
  evidenceRetention: number | null;
  /** Turns whose evidence was sent whole. */
  evidenceWhole: number;
  overBeforePassages: number;
  /** Turns whose rank-1 passage was clipped or dropped. */
  rank1Lost: number;
  costPer1000Turns?: number | null;
}

export interface SweepResult {
  schema: 'spillway.sweep/1';
  cells: SweepCell[];
  records: number;
  malformed: number;
  issues: LogIssue[];
}

export class SweepCancelled extends Error {
  constructor() {
    super('sweep cancelled');
  }
}

interface Acc {
  cell: SweepCell;
  evTokens: number;
  evKept: number;
  cost: CostAccumulator;
}

export async function sweep(
  records: AsyncIterable<ReadItem> | Iterable<ReadItem>,
  opts: SweepOptions,
  ctx: { accountant?: Accountant; signal?: AbortSignal; onProgress?: (done: number, bytes?: number) => void; progressEvery?: number } = {},
): Promise<SweepResult> {
  const acct = ctx.accountant ?? (await Accountant.create());
  const ks: (number | null)[] = opts.ks && opts.ks.length ? opts.ks : [null];
  const options: { budget: number; plan: string; spec: string; k: number | null }[] = [];
  for (const budget of opts.budgets)
    for (const plan of opts.plans)
      for (const k of ks) {
        const spec = k === null ? plan : withTop(plan, k);
        parsePlan(spec); // throws PlanError with the valid list before any work
        options.push({ budget, plan, spec, k });
      }
  const accs: Acc[] = options.map((o) => ({
    cell: { budget: o.budget, plan: o.plan, k: o.k, turns: 0, tokens: 0, meanTokens: 0, evidenceTurns: 0, evidenceRetention: null, evidenceWhole: 0, overBeforePassages: 0, rank1Lost: 0 },
    evTokens: 0,
    evKept: 0,
    cost: new CostAccumulator(opts.prices),
  }));
  const result: SweepResult = { schema: 'spillway.sweep/1', cells: [], records: 0, malformed: 0, issues: [] };
  const every = ctx.progressEvery ?? 500;
  for await (const item of records) {
    if (ctx.signal?.aborted) throw new SweepCancelled();
    if ('issue' in item) {
      result.malformed++;
      if (result.issues.length < 10_000) result.issues.push(item.issue);
      continue;
    }
    const { record } = item;
    try {
      await acct.encoder(resolveEncoding(record, opts));
    } catch (e) {
      if (!(e instanceof LedgerError)) throw e;
      result.malformed++;
      if (result.issues.length < 10_000) result.issues.push({ line: item.line, column: 1, code: 'unknown-encoding', message: e.message });
      continue;
    }
    const ev = evidenceOf(record);
    const rank1 = rank1Id(record);
    options.forEach((o, n) => {
      const out = repackRecord(record, { budget: o.budget, reserve: opts.reserve, encoding: opts.encoding, plan: o.spec }, acct);
      addTo(accs[n]!, out, record, ev?.ids, rank1, acct);
    });
    result.records++;
    if (result.records % every === 0) {
      ctx.onProgress?.(result.records, item.offset);
      await new Promise((r) => setImmediate(r));
    }
  }
  ctx.onProgress?.(result.records);
  result.cells = accs.map((a) => {
    const c = a.cell;
    c.meanTokens = c.turns === 0 ? 0 : c.tokens / c.turns;
    c.evidenceRetention = a.evTokens === 0 ? null : a.evKept / a.evTokens;
    if (opts.prices) c.costPer1000Turns = a.cost.result().per1000Turns;
    return c;
  });
  return result;
}

function rank1Id(record: LogRecord): string | undefined {
  let best: { id: string; rank: number } | undefined;
  for (const s of record.segments) {
    if (s.kind !== 'passage') continue;
    const r = typeof s.rank === 'number' ? s.rank : Number.POSITIVE_INFINITY;
    if (!best || r < best.rank) best = { id: s.id, rank: r };
  }
  return best?.id;
}

function addTo(a: Acc, out: RecordOutcome, record: LogRecord, evidence: string[] | undefined, rank1: string | undefined, acct: Accountant): void {
  const c = a.cell;
  c.turns++;
  c.tokens += out.used;
  a.cost.add(record.model.name, out.used);
  if (out.state === 'over-before-passages') c.overBeforePassages++;
  const segs = out.record.segments;
  if (rank1 !== undefined) {
    const i = segs.findIndex((s) => s.id === rank1);
    if (i >= 0 && out.fates[i] !== 'kept') c.rank1Lost++;
  }
  if (evidence) {
    c.evidenceTurns++;
    let tokens = 0;
    let kept = 0;
    for (const id of evidence) {
      const i = segs.findIndex((s) => s.id === id);
      if (i < 0) continue;
      const text = segs[i]!.text;
      const t = acct.count(out.encoding as Parameters<Accountant['count']>[0], text);
      tokens += t;
      const f = out.fates[i];
      kept += f === 'kept' ? t : f === 'clipped' ? acct.count(out.encoding as Parameters<Accountant['count']>[0], text.slice(0, out.chars[i])) : 0;
    }
    a.evTokens += tokens;
    a.evKept += kept;
    if (kept === tokens) c.evidenceWhole++;
  }
}
