/**
 * The host's in-memory picture of one audited log: every record with its ledger, in line order,
 * and the line problems. View models, CodeLens, diagnostics and navigation are built from it.
 */
import type { Ledger } from '../audit/types';
import type { LogIssue, LogRecord } from '../log/types';

export interface AuditedRecord {
  /** 1-based line of the record in the file. */
  line: number;
  record: LogRecord;
  ledger: Ledger;
}

export interface AuditedLog {
  /** Display name (path or URI) of the log. */
  file: string;
  /** Sorted by line, ascending. */
  records: AuditedRecord[];
  issues: LogIssue[];
}

/** Index of the record on `line`, or -1. Binary search: `records` is sorted by line. */
export function indexOfLine(records: readonly AuditedRecord[], line: number): number {
  let lo = 0;
  let hi = records.length - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const l = records[mid]!.line;
    if (l === line) return mid;
    if (l < line) lo = mid + 1;
    else hi = mid - 1;
  }
  return -1;
}

/** The record on `line`, if any. */
export function recordAtLine(log: AuditedLog, line: number): AuditedRecord | undefined {
  const i = indexOfLine(log.records, line);
  return i < 0 ? undefined : log.records[i];
}

/**
 * The record under 0-based editor line `line` of a log the editor shows in Spillway's own format (an
 * imported chat or OTLP log shows other JSON, so hovers that read the line's raw text skip it).
 */
export function spillwayRecordAt(session: { log?: AuditedLog | undefined; format: string } | undefined, line: number): AuditedRecord | undefined {
  if (!session?.log || session.format !== 'spillway') return undefined;
  return recordAtLine(session.log, line + 1);
}

/** Index of the first record whose line is > `line` (records.length when none). */
export function firstAfter(records: readonly AuditedRecord[], line: number): number {
  let lo = 0;
  let hi = records.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (records[mid]!.line <= line) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}
