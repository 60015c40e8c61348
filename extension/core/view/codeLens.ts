/** CodeLens and status-bar wording: one line of figures per record, one summary per log. */
import type { Ledger } from '../audit/types';
import { fmt, plural } from './format';
import type { AuditedLog } from './audited';

export interface FateCounts {
  passagesClipped: number;
  passagesDropped: number;
  historyDropped: number;
}

export function fateCounts(ledger: Ledger): FateCounts {
  const c: FateCounts = { passagesClipped: 0, passagesDropped: 0, historyDropped: 0 };
  for (const s of ledger.segments) {
    if (s.kind === 'passage') {
      if (s.fate === 'clipped') c.passagesClipped++;
      else if (s.fate === 'dropped') c.passagesDropped++;
    } else if (s.kind === 'history' && s.fate !== 'kept') c.historyDropped++;
  }
  return c;
}

/**
 * `7,034 / 7,168 · 134 free · 2 clipped · 1 dropped` — used / budget tokens, then free room or how far
 * over, then passages clipped/dropped, history segments not sent, and spill.
 */
export function codeLensTitle(ledger: Ledger): string {
  const parts = [`${fmt(ledger.used)} / ${fmt(ledger.budget)}`];
  if (ledger.state === 'over-before-passages') parts.push(`${fmt(ledger.over)} over before passages`);
  else if (ledger.over > 0) parts.push(`${fmt(ledger.over)} over`);
  else parts.push(`${fmt(ledger.free)} free`);
  const c = fateCounts(ledger);
  if (c.passagesClipped) parts.push(`${fmt(c.passagesClipped)} clipped`);
  if (c.passagesDropped) parts.push(`${fmt(c.passagesDropped)} dropped`);
  if (c.historyDropped) parts.push(`${plural(c.historyDropped, 'history segment')} cut`);
  if (ledger.spill > 0) parts.push(`${fmt(ledger.spill)} spilled`);
  return parts.join(' · ');
}

export function codeLensTooltip(ledger: Ledger): string {
  return (
    `Conversation ${ledger.conversation}, turn ${ledger.turn} · ${ledger.model} (${ledger.encoding}) · ` +
    `budget ${fmt(ledger.budget)} = window ${fmt(ledger.window)} − reserve ${fmt(ledger.reserve)} · ` +
    `framing ${ledger.framingProfile} ${fmt(ledger.framing)} tokens · plan ${ledger.plan}. Click to open this turn in the Spillway panel.`
  );
}

export interface LogSummary {
  turns: number;
  overBudget: number;
  rank1Clipped: number;
  rank1Dropped: number;
  malformed: number;
}

export function logSummary(log: AuditedLog): LogSummary {
  const s: LogSummary = { turns: log.records.length, overBudget: 0, rank1Clipped: 0, rank1Dropped: 0, malformed: log.issues.length };
  for (const { ledger } of log.records) {
    if (ledger.state !== 'ok') s.overBudget++;
    if (ledger.rank1Fate === 'clipped') s.rank1Clipped++;
    else if (ledger.rank1Fate === 'dropped') s.rank1Dropped++;
  }
  return s;
}

/** Status bar text (codicon syntax understood by the status bar). */
export function statusText(s: LogSummary): string {
  return `$(symbol-ruler) ${plural(s.turns, 'turn')} · ${fmt(s.overBudget)} over · ${fmt(s.rank1Clipped)} rank-1 clipped`;
}

export function statusTooltip(s: LogSummary, file: string): string {
  return (
    `Spillway: ${file}\n${plural(s.turns, 'turn')}, ${fmt(s.overBudget)} over budget, ` +
    `rank-1 passage clipped in ${fmt(s.rank1Clipped)} and dropped in ${fmt(s.rank1Dropped)}, ` +
    `${plural(s.malformed, 'malformed line')}.\nClick to open the Spillway panel.`
  );
}
