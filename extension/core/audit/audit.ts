/**
 * Auditing a whole log: records stream through the ledger one at a time; the caller chooses
 * whether to keep them (small logs, editor) or pass them on (CLI on a 1 GB log) via `onLedger`.
 */
import type { LogIssue } from '../log/types';
import { readLog, readLogText, type ReadItem, type ReadOptions } from '../log/reader';
import { Accountant } from '../tokens/accountant';
import { auditRecord, LedgerError } from './ledger';
import { analyseTurn } from '../analysis/analyse';
import { loadShingleHasher } from '../analysis/shingles';
import { AnalysisAccumulator } from '../analysis/accumulate';
import type { AnalysisSettings } from '../analysis/types';
import type { AuditOptions, AuditReport, AuditSummary, Ledger } from './types';

export interface AuditContext {
  accountant?: Accountant;
  signal?: AbortSignal;
  /** Called every `progressEvery` records with records done (and bytes done when streaming). */
  onProgress?: (done: number, bytes?: number) => void;
  progressEvery?: number;
  /** Receives each ledger; when given, ledgers are not kept in the report (bounded memory). */
  onLedger?: (ledger: Ledger) => void;
  read?: ReadOptions;
  /** Keep at most this many issues in the report (the count in the summary stays exact). */
  maxIssues?: number;
  /** Run the grounding analysis on every record (settings override the documented defaults). */
  analysis?: Partial<AnalysisSettings> | boolean;
}

export class AuditCancelled extends Error {
  constructor() {
    super('audit cancelled');
  }
}

export class SummaryBuilder {
  private readonly s: AuditSummary = { turns: 0, overBudget: 0, overBeforePassages: 0, rank1Clipped: 0, rank1Dropped: 0, spill: 0, malformed: 0, conversations: 0 };
  private readonly conversations = new Set<string>();

  add(l: Ledger): void {
    this.s.turns++;
    if (l.state !== 'ok') this.s.overBudget++;
    if (l.state === 'over-before-passages') this.s.overBeforePassages++;
    if (l.rank1Fate === 'clipped') this.s.rank1Clipped++;
    if (l.rank1Fate === 'dropped') this.s.rank1Dropped++;
    this.s.spill += l.spill;
    // Bounded: past 1M distinct ids the count is a floor (stated in the docs).
    if (this.conversations.size < 1_000_000) this.conversations.add(l.conversation);
  }

  addIssue(): void {
    this.s.malformed++;
  }

  result(): AuditSummary {
    return { ...this.s, conversations: this.conversations.size };
  }
}

export function summarise(ledgers: readonly Ledger[], errors: readonly LogIssue[]): AuditSummary {
  const b = new SummaryBuilder();
  ledgers.forEach((l) => b.add(l));
  errors.forEach(() => b.addIssue());
  return b.result();
}

/** Audits items from the reader (or any source of located records and issues). */
export async function auditItems(items: AsyncIterable<ReadItem> | Iterable<ReadItem>, opts: AuditOptions & { file?: string }, ctx: AuditContext = {}): Promise<AuditReport> {
  const acct = ctx.accountant ?? (await Accountant.create());
  const records: Ledger[] = [];
  const errors: LogIssue[] = [];
  const maxIssues = ctx.maxIssues ?? 10_000;
  const summary = new SummaryBuilder();
  const every = ctx.progressEvery ?? 500;
  const analysisSettings = ctx.analysis === true ? {} : ctx.analysis || undefined;
  const analyses = analysisSettings ? new AnalysisAccumulator() : undefined;
  if (analysisSettings) await loadShingleHasher();
  let done = 0;
  for await (const item of items) {
    if (ctx.signal?.aborted) throw new AuditCancelled();
    if ('issue' in item) {
      summary.addIssue();
      if (errors.length < maxIssues) errors.push(item.issue);
      continue;
    }
    let ledger: Ledger;
    try {
      ledger = await auditRecord(item, opts, acct);
    } catch (e) {
      if (!(e instanceof LedgerError)) throw e;
      summary.addIssue();
      if (errors.length < maxIssues) errors.push({ line: item.line, column: 1, code: 'unknown-encoding', message: e.message });
      continue;
    }
    summary.add(ledger);
    if (analyses && analysisSettings) {
      ledger.analysis = analyseTurn(item.record, ledger, analysisSettings);
      analyses.add(ledger.analysis);
    }
    if (ctx.onLedger) ctx.onLedger(ledger);
    else records.push(ledger);
    if (++done % every === 0) {
      ctx.onProgress?.(done, item.offset);
      // Let the event loop breathe (editor responsiveness, cancellation).
      await new Promise((r) => setImmediate(r));
    }
  }
  ctx.onProgress?.(done);
  const report: AuditReport = { schema: 'spillway.audit/1', file: opts.file ?? '', options: pickOptions(opts), records, errors, summary: summary.result() };
  if (analyses) report.analysisSummary = analyses.result();
  return report;
}

function pickOptions(o: AuditOptions): AuditOptions {
  const out: AuditOptions = {};
  if (o.budget !== undefined) out.budget = o.budget;
  if (o.reserve !== undefined) out.reserve = o.reserve;
  if (o.encoding !== undefined) out.encoding = o.encoding;
  if (o.plan !== undefined) out.plan = o.plan;
  return out;
}

export function auditStream(chunks: AsyncIterable<Uint8Array>, opts: AuditOptions & { file?: string }, ctx: AuditContext = {}): Promise<AuditReport> {
  return auditItems(readLog(chunks, ctx.read), opts, ctx);
}

export function auditText(text: string, opts: AuditOptions & { file?: string }, ctx: AuditContext = {}): Promise<AuditReport> {
  const { records, issues } = readLogText(text, ctx.read);
  const items: ReadItem[] = [...records, ...issues.map((issue) => ({ issue }))].sort((a, b) => lineOf(a) - lineOf(b));
  return auditItems(items, opts, ctx);
}

const lineOf = (i: ReadItem): number => ('issue' in i ? i.issue.line : i.line);
