/**
 * What counts as a problem turn, and navigation between problem turns (the "next/previous problem
 * turn" commands). The same checks drive the diagnostics, so both agree.
 */
import type { Fate } from '../log/types';
import type { Ledger, SegmentLedger } from '../audit/types';
import type { LogRecord } from '../log/types';
import { firstAfter, type AuditedRecord } from './audited';

/** Which checks run; mirrors the `spillway.diagnostics.enabled` setting. */
export interface Checks {
  malformed: boolean;
  overBudget: boolean;
  rank1Clipped: boolean;
  rank1Dropped: boolean;
  evidenceLost: boolean;
  usageDrift: boolean;
  /** |reported − counted| prompt tokens tolerated before `usage-drift` fires. */
  usageDriftTolerance: number;
  // Grounding checks (read `ledger.analysis`; see core/view/grounding.ts).
  unsupportedSentence: boolean;
  evidenceLostToBudget: boolean;
  lexicalMismatch: boolean;
  nearDuplicates: boolean;
  middlePosition: boolean;
  stalePassage: boolean;
}

export const ALL_CHECKS: Checks = {
  malformed: true,
  overBudget: true,
  rank1Clipped: true,
  rank1Dropped: true,
  evidenceLost: true,
  usageDrift: true,
  usageDriftTolerance: 0,
  unsupportedSentence: true,
  evidenceLostToBudget: true,
  lexicalMismatch: true,
  nearDuplicates: true,
  middlePosition: true,
  stalePassage: true,
};

/**
 * What `spillway.diagnostics.enabled` starts from: every check but `stalePassage`, which would put one
 * note on nearly every passage of a log whose knowledge base is old (8,534 of 10,634 grounding
 * diagnostics on a 2,000-turn generated log); stale passages still show in the panel and the hover.
 */
export const DEFAULT_CHECKS: Checks = { ...ALL_CHECKS, stalePassage: false };

/** The best-ranked passage (lowest `rank`; the first passage when none is ranked). */
export function rank1Passage(ledger: Ledger): SegmentLedger | undefined {
  let best: SegmentLedger | undefined;
  for (const s of ledger.segments) {
    if (s.kind !== 'passage') continue;
    if (!best) best = s;
    else if (s.rank !== undefined && (best.rank === undefined || s.rank < best.rank)) best = s;
  }
  return best;
}

export interface LostEvidence {
  id: string;
  /** undefined when no segment has that id. */
  fate?: Fate;
  segment?: SegmentLedger;
}

/** Reviewer-marked evidence passages that were not sent whole (clipped, dropped or missing). */
export function lostEvidence(record: LogRecord, ledger: Ledger): LostEvidence[] {
  if (!Array.isArray(record.evidence)) return [];
  const byId = new Map<string, SegmentLedger>();
  for (const s of ledger.segments) if (!byId.has(s.id)) byId.set(s.id, s);
  const lost: LostEvidence[] = [];
  for (const id of record.evidence) {
    if (typeof id !== 'string') continue;
    const seg = byId.get(id);
    if (!seg) lost.push({ id });
    else if (seg.fate !== 'kept') lost.push({ id, fate: seg.fate, segment: seg });
  }
  return lost;
}

/** Reasons (short words) this turn is a problem under `checks`; empty when it is not. */
export function problemReasons(rec: Pick<AuditedRecord, 'record' | 'ledger'>, checks: Checks): string[] {
  const { ledger, record } = rec;
  const out: string[] = [];
  if (checks.overBudget && ledger.state !== 'ok') out.push(ledger.state === 'over-budget' ? 'over budget' : 'over budget before passages');
  if (checks.rank1Clipped && ledger.rank1Fate === 'clipped') out.push('rank-1 passage clipped');
  if (checks.rank1Dropped && ledger.rank1Fate === 'dropped') out.push('rank-1 passage dropped');
  if (checks.evidenceLost && lostEvidence(record, ledger).length > 0) out.push('evidence lost');
  if (checks.usageDrift && ledger.usage && Math.abs(ledger.usage.drift) > checks.usageDriftTolerance) out.push('usage drift');
  // Of the grounding checks only the sentence ones make a problem turn (the passage notes are information).
  if (checks.unsupportedSentence && ledger.analysis && ledger.analysis.counts.unsupported > 0) out.push('unsupported sentence');
  if (checks.evidenceLostToBudget && ledger.analysis && ledger.analysis.counts.lost > 0) out.push('evidence lost to the budget');
  return out;
}

/**
 * The next (dir = 1) or previous (dir = -1) problem turn after/before `line`, wrapping around the
 * file once. Undefined when no turn is a problem.
 */
export function findProblemTurn(
  records: readonly AuditedRecord[],
  line: number,
  dir: 1 | -1,
  checks: Checks,
): AuditedRecord | undefined {
  const n = records.length;
  if (n === 0) return undefined;
  // Start just past the current line in the travel direction.
  let i = dir === 1 ? firstAfter(records, line) : firstAfter(records, line - 1) - 1;
  for (let step = 0; step < n; step++) {
    const idx = (((i % n) + n) % n);
    const r = records[idx]!;
    if (problemReasons(r, checks).length > 0) return r;
    i += dir;
  }
  return undefined;
}
