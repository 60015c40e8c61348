/**
 * Incremental audit of an editor document. Results are cached by the exact text of each line, so
 * after an edit only lines whose text changed are parsed and audited again (unchanged lines, even
 * when they moved, reuse their ledger; the accountant's memo makes repeated texts inside changed
 * lines cheap too). Work runs in slices that yield to the event loop and honour an AbortSignal.
 */
import type { Ledger } from '../audit/types';
import type { LocatedRecord, LogIssue, LogRecord } from '../log/types';
import type { AuditedLog, AuditedRecord } from './audited';

export interface LineDocument {
  /** Number of lines. */
  readonly lineCount: number;
  /** Text of 1-based line `line`, without the line break. */
  lineAt(line: number): string;
}

type Entry = { record: LogRecord; ledger: Ledger } | { issue: Omit<LogIssue, 'line'> };

export interface IncrementalDeps {
  parse(text: string, line: number): { record: LogRecord } | { issue: LogIssue };
  /** Audits one record; a thrown error becomes a line issue (e.g. an unknown encoding). */
  audit(located: LocatedRecord): Promise<Ledger>;
  /** Lines longer than this (UTF-16 units) are reported and skipped. */
  maxLineLength: number;
  /** Milliseconds of work between yields to the event loop. */
  sliceMs?: number;
  now?: () => number;
}

export class Cancelled extends Error {
  constructor() {
    super('cancelled');
  }
}

export interface RunResult {
  log: AuditedLog;
  /** Lines parsed and audited in this run (the rest came from the cache). */
  recomputed: number;
}

const yieldToLoop = (): Promise<void> => new Promise((r) => setTimeout(r, 0));

export class IncrementalAuditor {
  private cache = new Map<string, Entry>();

  constructor(private readonly deps: IncrementalDeps) {}

  async run(
    doc: LineDocument,
    file: string,
    ctx: { signal?: AbortSignal; onProgress?: (done: number, total: number) => void } = {},
  ): Promise<RunResult> {
    const now = this.deps.now ?? (() => performance.now());
    const slice = this.deps.sliceMs ?? 12;
    const next = new Map<string, Entry>();
    const records: AuditedRecord[] = [];
    const issues: LogIssue[] = [];
    let recomputed = 0;
    let sliceStart = now();
    const total = doc.lineCount;
    for (let line = 1; line <= total; line++) {
      if (now() - sliceStart > slice) {
        ctx.onProgress?.(line - 1, total);
        await yieldToLoop();
        if (ctx.signal?.aborted) throw new Cancelled();
        sliceStart = now();
      }
      let text = doc.lineAt(line);
      if (line === 1 && text.charCodeAt(0) === 0xfeff) text = text.slice(1);
      if (text.trim() === '') continue;
      let entry = next.get(text) ?? this.cache.get(text);
      if (!entry) {
        recomputed++;
        entry = await this.compute(text, line);
      }
      next.set(text, entry);
      if ('issue' in entry) issues.push({ ...entry.issue, line });
      else records.push({ line, record: entry.record, ledger: entry.ledger.line === line ? entry.ledger : { ...entry.ledger, line } });
    }
    if (ctx.signal?.aborted) throw new Cancelled();
    this.cache = next;
    ctx.onProgress?.(total, total);
    return { log: { file, records, issues }, recomputed };
  }

  private async compute(text: string, line: number): Promise<Entry> {
    if (text.length > this.deps.maxLineLength) {
      return {
        issue: {
          column: this.deps.maxLineLength + 1,
          code: 'line-too-long',
          message: `line is ${text.length} characters long, over the spillway.maxLineLength limit of ${this.deps.maxLineLength}; skipped`,
        },
      };
    }
    const parsed = this.deps.parse(text, line);
    if ('issue' in parsed) return { issue: stripLine(parsed.issue) };
    try {
      const ledger = await this.deps.audit({ line, offset: 0, record: parsed.record });
      return { record: parsed.record, ledger };
    } catch (e) {
      return { issue: { column: 1, code: 'audit-failed', message: e instanceof Error ? e.message : String(e) } };
    }
  }
}

function stripLine(issue: LogIssue): Omit<LogIssue, 'line'> {
  const { line: _line, ...rest } = issue;
  return rest;
}
