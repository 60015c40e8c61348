/** Plain-text rendering of an audit: a per-turn table and a summary. */
import type { LogIssue } from '../log/types';
import type { AuditSummary, Ledger } from './types';
import type { AnalysisSummary } from '../analysis/types';

const n = (x: number): string => x.toLocaleString('en-US');

export const TEXT_COLUMNS = ['line', 'conversation', 'turn', 'used/budget', 'free', 'over', 'spill', 'instr', 'hist', 'query', 'pass', 'frame+join', 'clipped', 'dropped', 'rank-1', 'state'] as const;

export function textRow(l: Ledger): string[] {
  const clipped = l.segments.filter((s) => s.fate === 'clipped').length;
  const dropped = l.segments.filter((s) => s.fate === 'dropped').length;
  return [
    String(l.line),
    l.conversation,
    String(l.turn),
    `${n(l.used)}/${n(l.budget)}`,
    n(l.free),
    n(l.over),
    n(l.spill),
    n(l.byKind.instructions),
    n(l.byKind.history),
    n(l.byKind.query),
    n(l.byKind.passage + l.byKind.tool),
    n(l.framing + l.joins),
    String(clipped),
    String(dropped),
    l.rank1Fate ?? '-',
    l.state,
  ];
}

export function formatTable(rows: string[][], header: readonly string[]): string {
  const widths = header.map((h, i) => Math.max(h.length, ...rows.map((r) => (r[i] ?? '').length)));
  const fmt = (r: readonly string[]): string => r.map((c, i) => (i <= 1 ? c.padEnd(widths[i]!) : c.padStart(widths[i]!))).join('  ');
  return [fmt(header), widths.map((w) => '-'.repeat(w)).join('  '), ...rows.map(fmt)].join('\n');
}

export function formatSummary(s: AuditSummary, errors: readonly LogIssue[]): string {
  const lines = [
    `turns: ${n(s.turns)} in ${n(s.conversations)} conversation(s)`,
    `over budget: ${n(s.overBudget)} (of which over before any passage: ${n(s.overBeforePassages)})`,
    `rank-1 passage clipped: ${n(s.rank1Clipped)}, dropped: ${n(s.rank1Dropped)}`,
    `spill: ${n(s.spill)} tokens not sent`,
    `malformed lines: ${n(s.malformed)}`,
  ];
  for (const e of errors.slice(0, 50)) lines.push(`  line ${e.line}, column ${e.column}: ${e.message} [${e.code}]`);
  if (errors.length > 50) lines.push(`  … ${errors.length - 50} more`);
  return lines.join('\n');
}

const pct = (x: number | null): string => (x === null ? '-' : `${(100 * x).toFixed(1)}%`);
const f3 = (x: number | null): string => (x === null ? '-' : x.toFixed(3));

export function formatAnalysisSummary(a: AnalysisSummary): string {
  return [
    `grounding (${n(a.turnsWithReply)} turns with a reply):`,
    `  reply sentences: ${n(a.sentences.supported)} supported, ${n(a.sentences.unsupported)} unsupported, ${n(a.sentences.lost)} supported only by clipped/dropped text`,
    `  turns with unsupported sentences: ${n(a.turnsWithUnsupported)} (${pct(a.shareWithUnsupported)}); with evidence lost to the budget: ${n(a.turnsWithLostEvidence)} (${pct(a.shareWithLostEvidence)})`,
    `  reviewer-marked evidence clipped or dropped: ${n(a.turnsWithEvidenceCut)} turn(s)`,
    `  mean Knowledge F1: ${f3(a.meanKnowledgeF1)} over ${n(a.knowledgeF1Turns)} turn(s); mean Kendall tau (retriever vs BM25): ${f3(a.meanKendallTau)}`,
    `  near-duplicate pairs: ${n(a.duplicatePairs)} wasting ${n(a.duplicateWasteTokens)} tokens; stale passages: ${n(a.stalePassages)} (${n(a.staleTokens)} tokens)`,
    `  low-ranked passage far the best lexical match: ${n(a.lexicalMismatchTurns)} turn(s); evidence in the middle of a long block: ${n(a.middlePositionTurns)} turn(s)`,
  ].join('\n');
}
