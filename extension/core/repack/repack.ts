/**
 * Re-pack a whole log: every record packed again under a new budget / reserve / encoding / plan and
 * written as a new v1 line (a copy of the parsed record with only the re-pack's decisions changed:
 * `model.window`, `model.reserve`, `model.encoding` when one is given, `plan`, `sent`, the segment
 * order under `order:edges`, and `fusion` under `fusion:L`). Malformed lines are copied to the
 * output verbatim when their text is known (so nothing is lost) and reported with line and column.
 */
import type { LogIssue } from '../log/types';
import { parseRecordLine, readLogLines, type ReadItem, type ReadOptions } from '../log/reader';
import { Accountant } from '../tokens/accountant';
import { buildLedger, LedgerError, resolveEncoding } from '../audit/ledger';
import type { TurnState } from '../audit/types';
import { repackRecord } from './pack';
import { compareLedgers, type TurnComparison } from './compare';
import type { RepackOptions, RepackSummary } from './types';

export type { RepackOptions, RepackSummary } from './types';

/** A reader item; issues may carry the line's raw text so re-pack can copy it verbatim. */
export type RepackItem = ReadItem | { issue: LogIssue; text?: string };

export class RepackCancelled extends Error {
  constructor() {
    super('re-pack cancelled');
  }
}

export interface RepackContext {
  accountant?: Accountant;
  signal?: AbortSignal;
  onProgress?: (done: number, bytes?: number) => void;
  progressEvery?: number;
  /** Receives each output line, newline included. Awaited (back-pressure). */
  write: (line: string) => void | Promise<void>;
  /** When given, each record is compared with its original packing and the result passed here. */
  onComparison?: (c: TurnComparison) => void;
  /** Keep at most this many issues in the summary (the count stays exact). Default 10,000. */
  maxIssues?: number;
}

/** Like `readLog`, but malformed lines keep their text (for verbatim copying). */
export async function* readLogForRepack(chunks: AsyncIterable<Uint8Array> | Iterable<Uint8Array>, opts: ReadOptions = {}): AsyncGenerator<RepackItem> {
  for await (const raw of readLogLines(chunks, opts)) {
    if ('issue' in raw) {
      yield raw;
      continue;
    }
    const parsed = parseRecordLine(raw.text, raw.line);
    if ('issue' in parsed) yield { issue: parsed.issue, text: raw.text };
    else yield { line: raw.line, offset: raw.offset, record: parsed.record };
  }
}

export async function repackLines(
  items: AsyncIterable<RepackItem> | Iterable<RepackItem>,
  opts: RepackOptions,
  ctx: RepackContext,
): Promise<RepackSummary> {
  const acct = ctx.accountant ?? (await Accountant.create());
  const maxIssues = ctx.maxIssues ?? 10_000;
  const every = ctx.progressEvery ?? 1000;
  const states: Record<TurnState, number> = { ok: 0, 'over-budget': 0, 'over-before-passages': 0 };
  const summary: RepackSummary = { records: 0, malformed: 0, copiedVerbatim: 0, issues: [], states, tokens: 0 };
  if (ctx.onComparison) summary.changed = 0;
  const report = (issue: LogIssue): void => {
    summary.malformed++;
    if (summary.issues.length < maxIssues) summary.issues.push(issue);
  };
  for await (const item of items) {
    if (ctx.signal?.aborted) throw new RepackCancelled();
    if ('issue' in item) {
      report(item.issue);
      if ('text' in item && typeof item.text === 'string') {
        await ctx.write(item.text + '\n');
        summary.copiedVerbatim++;
      }
      continue;
    }
    const { record } = item;
    let outcome;
    try {
      await acct.encoder(resolveEncoding(record, opts));
      outcome = repackRecord(record, opts, acct);
    } catch (e) {
      if (!(e instanceof LedgerError)) throw e;
      report({ line: item.line, column: 1, code: 'unknown-encoding', message: e.message });
      await ctx.write(JSON.stringify(record) + '\n');
      summary.copiedVerbatim++;
      continue;
    }
    summary.records++;
    states[outcome.state]++;
    summary.tokens += outcome.used;
    if (ctx.onComparison) {
      await acct.encoder(resolveEncoding(record, {}));
      const before = buildLedger(item, {}, acct);
      const after = buildLedger({ line: item.line, offset: item.offset, record: outcome.record }, {}, acct);
      const c = compareLedgers(before, after, record, { spentB: outcome.used, stateB: outcome.state });
      if (c.changed) summary.changed!++;
      ctx.onComparison(c);
    }
    await ctx.write(JSON.stringify(outcome.record) + '\n');
    if (summary.records % every === 0) {
      ctx.onProgress?.(summary.records, item.offset);
      await new Promise((r) => setImmediate(r));
    }
  }
  ctx.onProgress?.(summary.records);
  return summary;
}
