/**
 * Diagnostic descriptors (editor-neutral) for a log: malformed lines, over-budget turns, a clipped or
 * dropped rank-1 passage, evidence that did not survive, and drift from API-reported prompt usage.
 * Each has a stable code users can filter on in the Problems view.
 */
import type { LogIssue } from '../log/types';
import { fmt } from './format';
import { largeSegmentNote } from '../audit/notes';
import type { AuditedLog, AuditedRecord } from './audited';
import { lostEvidence, rank1Passage, type Checks } from './problems';
import { locateRecordLine, rawColumnForChar, type RecordLineMap, type Span } from './recordLine';

export const DIAGNOSTIC_CODES = [
  'spillway.malformed',
  'spillway.not-a-log',
  'spillway.over-budget',
  'spillway.rank1-clipped',
  'spillway.rank1-dropped',
  'spillway.evidence-lost',
  'spillway.usage-drift',
  'spillway.large-segment',
  // Grounding (core/view/grounding.ts)
  'spillway.unsupported-sentence',
  'spillway.evidence-lost-to-budget',
  'spillway.lexical-mismatch',
  'spillway.near-duplicates',
  'spillway.middle-position',
  'spillway.stale-passage',
] as const;
export type DiagnosticCode = (typeof DIAGNOSTIC_CODES)[number];

export interface DiagnosticDescriptor {
  /** 1-based line. */
  line: number;
  /** 0-based columns, end exclusive. */
  start: number;
  end: number;
  severity: 'error' | 'warning' | 'information';
  code: DiagnosticCode;
  message: string;
  /** Other places on the same document the problem relates to (e.g. the passage that holds the words). */
  related?: Array<{ line: number; start: number; end: number; message: string }>;
}

/** Reads a line's text (1-based line); undefined past the end. */
export type LineSource = (line: number) => string | undefined;

/** A log whose line problems outnumber this share of its non-blank lines (and this count) "only looks like a log". */
export const NOT_A_LOG_SHARE = 0.5;
export const NOT_A_LOG_MIN_ISSUES = 10;

/** Whether a file should get one message instead of per-line errors. */
export function onlyLooksLikeLog(records: number, issues: number): boolean {
  if (records === 0 && issues > 0) return true;
  return issues >= NOT_A_LOG_MIN_ISSUES && issues / (records + issues) > NOT_A_LOG_SHARE;
}

export function notALogDiagnostic(records: number, issues: readonly LogIssue[], lineLength: number): DiagnosticDescriptor {
  const first = issues[0];
  const where = first ? ` First problem: line ${first.line}, column ${first.column}: ${first.message}` : '';
  return {
    line: 1,
    start: 0,
    end: Math.max(lineLength, 1),
    severity: 'error',
    code: 'spillway.not-a-log',
    message:
      `This file looks like a Spillway log but ${fmt(issues.length)} of its ${fmt(records + issues.length)} lines are not records, ` +
      `so Spillway shows no per-line problems for it.${where}`,
  };
}

export function issueDiagnostic(issue: LogIssue, lineText: string | undefined): DiagnosticDescriptor {
  const len = lineText?.length ?? 0;
  const start = Math.min(Math.max(issue.column - 1, 0), len);
  return {
    line: issue.line,
    start,
    end: Math.max(len, start + 1),
    severity: 'error',
    code: 'spillway.malformed',
    message: `Line ${issue.line}, column ${issue.column}: ${issue.message} (${issue.code})`,
  };
}

function whole(lineText: string, map: RecordLineMap | undefined): Span {
  return map?.record ?? { start: 0, end: Math.max(lineText.length, 1) };
}

/** Diagnostics for one audited record, placed on the exact JSON value they are about. */
export function recordDiagnostics(rec: AuditedRecord, lineText: string, checks: Checks): DiagnosticDescriptor[] {
  const { ledger, record, line } = rec;
  const out: DiagnosticDescriptor[] = [];
  let map: RecordLineMap | undefined;
  let mapped = false;
  const locate = (): RecordLineMap | undefined => {
    if (!mapped) {
      map = locateRecordLine(lineText);
      mapped = true;
    }
    return map;
  };
  const segText = (id: string): Span | undefined => locate()?.segments.find((s) => s.id === id)?.text;
  const push = (span: Span, severity: DiagnosticDescriptor['severity'], code: DiagnosticCode, message: string) =>
    out.push({ line, start: span.start, end: Math.max(span.end, span.start + 1), severity, code, message });

  if (checks.overBudget && ledger.state !== 'ok') {
    const span = locate()?.model ?? whole(lineText, locate());
    const msg =
      ledger.state === 'over-before-passages'
        ? `Instructions and query alone take ${fmt(ledger.used)} tokens, ${fmt(ledger.over)} over the budget of ${fmt(ledger.budget)}: no passage can fit.`
        : `Prompt uses ${fmt(ledger.used)} tokens, ${fmt(ledger.over)} over the budget of ${fmt(ledger.budget)} (window ${fmt(ledger.window)} − reserve ${fmt(ledger.reserve)}).`;
    push(span, 'warning', 'spillway.over-budget', msg);
  }

  const r1 = rank1Passage(ledger);
  if (r1 && r1.fate === 'clipped' && checks.rank1Clipped) {
    const lit = segText(r1.id);
    let span = lit ?? whole(lineText, locate());
    // Underline the spilled part only: from the cut to the closing quote.
    if (lit && r1.cut) span = { start: rawColumnForChar(lineText, lit, r1.cut.char), end: lit.end - 1 };
    const cut = r1.cut ? ` at token ${fmt(r1.cut.token)} (character ${fmt(r1.cut.char)})` : '';
    push(span, 'warning', 'spillway.rank1-clipped', `Rank-1 passage "${r1.id}" was clipped${cut}: ${fmt(r1.keptTokens)} of ${fmt(r1.tokens)} tokens sent.`);
  }
  if (r1 && r1.fate === 'dropped' && checks.rank1Dropped) {
    const span = segText(r1.id) ?? whole(lineText, locate());
    push(span, 'warning', 'spillway.rank1-dropped', `Rank-1 passage "${r1.id}" was dropped: none of its ${fmt(r1.tokens)} tokens were sent.`);
  }

  if (checks.evidenceLost) {
    for (const lost of lostEvidence(record, ledger)) {
      const ev = locate()?.evidence.find((e) => e.id === lost.id)?.span;
      const span = (lost.segment && segText(lost.id)) || ev || whole(lineText, locate());
      const msg =
        lost.fate === undefined
          ? `Evidence "${lost.id}" names no segment of this record.`
          : lost.fate === 'dropped'
            ? `Evidence passage "${lost.id}" was dropped: the reply's marked evidence never reached the model.`
            : `Evidence passage "${lost.id}" was clipped${lost.segment?.cut ? ` at character ${fmt(lost.segment.cut.char)}` : ''}: ${fmt(lost.segment?.keptTokens ?? 0)} of ${fmt(lost.segment?.tokens ?? 0)} tokens sent.`;
      push(span, 'warning', 'spillway.evidence-lost', msg);
    }
  }

  // Guard rail against hostile text: always reported, so a huge passage explains a slow first open.
  for (const s of ledger.segments) {
    if (!s.large) continue;
    push(segText(s.id) ?? whole(lineText, locate()), 'information', 'spillway.large-segment', `${largeSegmentNote(s.kind, s.id, s.large)} (${fmt(s.tokens)} tokens).`);
  }

  if (checks.usageDrift && ledger.usage && Math.abs(ledger.usage.drift) > checks.usageDriftTolerance) {
    const span = locate()?.usagePrompt ?? whole(lineText, locate());
    const d = ledger.usage.drift;
    push(
      span,
      'warning',
      'spillway.usage-drift',
      `API-reported prompt tokens ${fmt(ledger.usage.prompt)} differ from the counted ${fmt(ledger.used)} by ${d > 0 ? '+' : ''}${fmt(d)}.`,
    );
  }
  return out;
}

/** All diagnostics for a log; a file that only looks like a log gets a single message. */
export function logDiagnostics(log: AuditedLog, lineText: LineSource, checks: Checks): DiagnosticDescriptor[] {
  if (onlyLooksLikeLog(log.records.length, log.issues.length)) {
    return [notALogDiagnostic(log.records.length, log.issues, lineText(1)?.length ?? 0)];
  }
  const out: DiagnosticDescriptor[] = [];
  if (checks.malformed) for (const issue of log.issues) out.push(issueDiagnostic(issue, lineText(issue.line)));
  for (const rec of log.records) {
    const text = lineText(rec.line);
    if (text !== undefined) out.push(...recordDiagnostics(rec, text, checks));
  }
  return out;
}
