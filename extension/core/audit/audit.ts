/**
 * Auditing a whole log: records stream through the ledger one at a time; the caller chooses
 * whether to keep them (small logs, editor) or pass them on (CLI on a 1 GB log) via `onLedger`.
 */
import type { LocatedRecord, LogIssue } from '../log/types';
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
  /** Receives each ledger as `JSON.stringify(ledger)` (takes precedence over `onLedger`; lets workers serialise). */
  onLedgerJson?: (json: string) => void;
  /** Awaited now and then (each batch, each progress step): lets a slow output push back (bounded memory). */
  drain?: () => Promise<void>;
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

/** What one reader item becomes: a ledger (with its analysis when asked for) or an issue. */
export type ItemOutcome = { ledger: Ledger } | { issue: LogIssue };

/** `ctx.analysis` as settings, or undefined when the analysis is off. */
export function analysisSettingsOf(analysis: AuditContext['analysis']): Partial<AnalysisSettings> | undefined {
  return analysis === true ? {} : analysis || undefined;
}

/** Audits one located record (the per-record step both the single-thread and the worker path run). */
export async function auditOne(item: LocatedRecord, opts: AuditOptions, acct: Accountant, analysisSettings: Partial<AnalysisSettings> | undefined): Promise<ItemOutcome> {
  let ledger: Ledger;
  try {
    ledger = await auditRecord(item, opts, acct);
  } catch (e) {
    if (!(e instanceof LedgerError)) throw e;
    return { issue: { line: item.line, column: 1, code: 'unknown-encoding', message: e.message } };
  }
  if (analysisSettings) ledger.analysis = analyseTurn(item.record, ledger, analysisSettings);
  return { ledger };
}

/** The fields of a ledger the log summary reads (all a worker needs to send besides the ledger's JSON). */
export type SummaryFields = Pick<Ledger, 'state' | 'rank1Fate' | 'spill' | 'conversation' | 'analysis'>;

/**
 * Folds outcomes, in file order, into the report: summary, issues (capped), log-level analysis, ledgers
 * (kept or passed on). One place, so the single-thread and the parallel audit give identical reports.
 */
export class AuditCollector {
  readonly records: Ledger[] = [];
  readonly errors: LogIssue[] = [];
  private readonly summary = new SummaryBuilder();
  private readonly analyses: AnalysisAccumulator | undefined;
  private readonly maxIssues: number;
  private readonly every: number;
  done = 0;

  constructor(
    private readonly opts: AuditOptions & { file?: string },
    private readonly ctx: AuditContext,
  ) {
    this.maxIssues = ctx.maxIssues ?? 10_000;
    this.every = ctx.progressEvery ?? 500;
    this.analyses = analysisSettingsOf(ctx.analysis) ? new AnalysisAccumulator() : undefined;
  }

  issue(issue: LogIssue): void {
    this.summary.addIssue();
    if (this.errors.length < this.maxIssues) this.errors.push(issue);
  }

  /** Adds a ledger (or the summary fields of one whose JSON `json` is passed on); true when progress was reported. */
  ledger(l: SummaryFields, offset: number, full?: Ledger, json?: string): boolean {
    this.summary.add(l as Ledger);
    if (this.analyses && l.analysis) this.analyses.add(l.analysis);
    if (json !== undefined && this.ctx.onLedgerJson) this.ctx.onLedgerJson(json);
    else if (full) {
      if (this.ctx.onLedgerJson) this.ctx.onLedgerJson(JSON.stringify(full));
      else if (this.ctx.onLedger) this.ctx.onLedger(full);
      else this.records.push(full);
    }
    if (++this.done % this.every === 0) {
      this.ctx.onProgress?.(this.done, offset);
      return true;
    }
    return false;
  }

  report(): AuditReport {
    this.ctx.onProgress?.(this.done);
    const report: AuditReport = { schema: 'spillway.audit/1', file: this.opts.file ?? '', options: pickOptions(this.opts), records: this.records, errors: this.errors, summary: this.summary.result() };
    if (this.analyses) report.analysisSummary = this.analyses.result();
    return report;
  }
}

/** Audits items from the reader (or any source of located records and issues). */
export async function auditItems(items: AsyncIterable<ReadItem> | Iterable<ReadItem>, opts: AuditOptions & { file?: string }, ctx: AuditContext = {}): Promise<AuditReport> {
  const acct = ctx.accountant ?? (await Accountant.create());
  const analysisSettings = analysisSettingsOf(ctx.analysis);
  if (analysisSettings) await loadShingleHasher();
  const collector = new AuditCollector(opts, ctx);
  for await (const item of items) {
    if (ctx.signal?.aborted) throw new AuditCancelled();
    if ('issue' in item) {
      collector.issue(item.issue);
      continue;
    }
    const out = await auditOne(item, opts, acct, analysisSettings);
    if ('issue' in out) {
      collector.issue(out.issue);
      continue;
    }
    if (collector.ledger(out.ledger, item.offset, out.ledger)) {
      // Let the event loop breathe (editor responsiveness, cancellation).
      await new Promise((r) => setImmediate(r));
      if (ctx.drain) await ctx.drain();
    }
  }
  return collector.report();
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
