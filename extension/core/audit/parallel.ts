/**
 * The audit on every core: the main thread reads the log and cuts it into batches of whole lines
 * (about `batchBytes` of text each); worker threads (./worker.ts, bundled to dist/auditWorker.js) parse,
 * validate and audit them, each with its own memo; results are folded into the report strictly in file
 * order by the same AuditCollector as the single-thread path, so the report is identical. At most
 * `2 × workers` batches are in flight: memory stays bounded whatever the log's size.
 */
import { Worker } from 'node:worker_threads';
import { availableParallelism } from 'node:os';
import type { LogIssue } from '../log/types';
import type { RawLine } from '../log/reader';
import type { AccountantStats } from '../tokens/accountant';
import type { AnalysisSettings } from '../analysis/types';
import { AuditCancelled, AuditCollector, analysisSettingsOf, type AuditContext, type SummaryFields } from './audit';
import type { AuditOptions, AuditReport, Ledger } from './types';

/** Logs larger than this (bytes) take the parallel path in the CLI. */
export const PARALLEL_MIN_BYTES = 8 * 1024 * 1024;

export interface WorkerInit {
  type: 'init';
  opts: AuditOptions;
  analysis: Partial<AnalysisSettings> | undefined;
  /** Send ledgers as JSON text (the caller wants `onLedgerJson`) rather than as objects. */
  json: boolean;
  memoEntries?: number;
}
export type LineItem = RawLine | { issue: LogIssue };
export type WorkerRequest = WorkerInit | { type: 'batch'; id: number; items: LineItem[] };
export type WireOutcome = { issue: LogIssue } | { s: SummaryFields; j: string; o: number } | { l: Ledger; o: number };
export type WorkerReply =
  | { type: 'ready' }
  | { type: 'batch'; id: number; out: WireOutcome[]; stats: AccountantStats }
  | { type: 'error'; id: number; message: string };

export interface ParallelContext extends AuditContext {
  /** Path of the bundled worker entry (dist/auditWorker.js). */
  workerScript: string;
  /** Worker threads; default: the machine's available parallelism, at most 4. */
  workers?: number;
  /** Text per batch (UTF-16 code units); default 2 Mi. */
  batchChars?: number;
  /** Memo entries per worker (default: the Accountant's default). */
  memoEntries?: number;
  /** V8 young-generation size of each worker, MiB (a larger nursery means fewer scavenges of per-record garbage). */
  youngGenMb?: number;
  /** Receives each worker's memo statistics at the end. */
  onStats?: (perWorker: AccountantStats[]) => void;
}

interface Pending {
  resolve(v: WireOutcome[]): void;
  reject(e: Error): void;
}

class AuditWorker {
  readonly worker: Worker;
  readonly pending = new Map<number, Pending>();
  stats: AccountantStats | undefined;
  private ready: Pending | undefined;
  private failed: Error | undefined;

  constructor(script: string, youngGenMb: number | undefined) {
    this.worker = new Worker(script, youngGenMb ? { resourceLimits: { maxYoungGenerationSizeMb: youngGenMb } } : {});
    this.worker.on('message', (m: WorkerReply) => {
      if (m.type === 'ready') this.ready?.resolve([]);
      else if (m.type === 'batch') {
        this.stats = m.stats;
        this.take(m.id)?.resolve(m.out);
      } else this.fail(new Error(`audit worker failed: ${m.message}`));
    });
    this.worker.on('error', (e) => this.fail(e));
    this.worker.on('exit', (code) => {
      if (code !== 0) this.fail(new Error(`audit worker exited with code ${code}`));
    });
  }

  private take(id: number): Pending | undefined {
    const p = this.pending.get(id);
    this.pending.delete(id);
    return p;
  }

  private fail(e: Error): void {
    this.failed ??= e;
    this.ready?.reject(e);
    for (const p of this.pending.values()) p.reject(e);
    this.pending.clear();
  }

  init(msg: WorkerInit): Promise<unknown> {
    return new Promise((resolve, reject) => {
      this.ready = { resolve, reject };
      this.worker.postMessage(msg);
    });
  }

  run(id: number, items: LineItem[]): Promise<WireOutcome[]> {
    if (this.failed) return Promise.reject(this.failed);
    return new Promise((resolve, reject) => {
      this.pending.set(id, { resolve, reject });
      this.worker.postMessage({ type: 'batch', id, items } satisfies WorkerRequest);
    });
  }
}

/** Audits the reader's raw lines (`readLogLines`) on worker threads; same report as `auditItems(readLog(…))`. */
export async function auditLinesParallel(lines: AsyncIterable<LineItem>, opts: AuditOptions & { file?: string }, ctx: ParallelContext): Promise<AuditReport> {
  const n = Math.max(1, ctx.workers ?? Math.min(4, availableParallelism()));
  const batchChars = ctx.batchChars ?? 2 * 1024 * 1024;
  const maxInFlight = 2 * n;
  const workers = Array.from({ length: n }, () => new AuditWorker(ctx.workerScript, ctx.youngGenMb ?? (Number(process.env['SPILLWAY_AUDIT_YOUNG_MB']) || undefined)));
  const collector = new AuditCollector(opts, ctx);
  const { file: _file, ...plainOpts } = opts;
  void _file;
  try {
    await Promise.all(workers.map((w) => w.init({ type: 'init', opts: plainOpts, analysis: analysisSettingsOf(ctx.analysis), json: !!ctx.onLedgerJson, memoEntries: ctx.memoEntries })));
    const queue: Promise<WireOutcome[]>[] = [];
    let batch: LineItem[] = [];
    let size = 0;
    let nextId = 0;
    const check = (): void => {
      if (ctx.signal?.aborted) throw new AuditCancelled();
    };
    const consume = (outs: WireOutcome[]): void => {
      for (const o of outs) {
        if ('issue' in o) collector.issue(o.issue);
        else if ('j' in o) collector.ledger(o.s, o.o, undefined, o.j);
        else collector.ledger(o.l, o.o, o.l);
      }
    };
    const send = async (): Promise<void> => {
      if (batch.length === 0) return;
      let w = workers[0]!;
      for (const x of workers) if (x.pending.size < w.pending.size) w = x;
      const p = w.run(nextId++, batch);
      p.catch(() => undefined); // awaited in order below; this only keeps an early failure from going unhandled
      queue.push(p);
      batch = [];
      size = 0;
      while (queue.length >= maxInFlight) {
        consume(await queue.shift()!);
        check();
        if (ctx.drain) await ctx.drain();
      }
    };
    for await (const item of lines) {
      check();
      batch.push(item);
      size += 'issue' in item ? 64 : item.text.length;
      if (size >= batchChars) await send();
    }
    await send();
    while (queue.length) {
      consume(await queue.shift()!);
      check();
    }
    ctx.onStats?.(workers.map((w) => w.stats ?? { hits: 0, misses: 0, entries: 0, encodedChars: 0 }));
  } finally {
    await Promise.all(workers.map((w) => w.worker.terminate()));
  }
  return collector.report();
}
