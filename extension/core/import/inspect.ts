/**
 * Plain-text report of how an import mapped each record: per message, the kind it became, why, and
 * the segments cut from it. Used by `spillway inspect`.
 */
import type { LocatedRecord, LogIssue } from '../log/types';
import type { RecordExplain } from './chat';

export function formatInspection(record: LocatedRecord, e: RecordExplain): string[] {
  const r = record.record;
  const out: string[] = [];
  out.push(`line ${e.line}: ${e.source}`);
  out.push(`  conversation ${e.conversation}`);
  out.push(`  turn         ${e.turn}`);
  out.push(`  model        ${e.model}`);
  out.push(`  encoding     ${e.encoding}`);
  out.push(`  window       ${e.window}`);
  out.push(`  reserve      ${e.reserve}`);
  for (const i of e.info) out.push(`  note         ${i}`);
  for (const m of e.messages) {
    const head = m.message === undefined ? `  message ${m.index} (${m.role})` : `  message ${m.index} (${m.role}) → prompt message ${m.message}`;
    out.push(`${head}: ${m.why}`);
    for (const s of m.segments) {
      const extra = [
        `${s.chars} chars`,
        s.rank !== undefined ? `rank ${s.rank}` : '',
        s.score !== undefined ? `score ${s.score}` : '',
        s.turn !== undefined ? `turn ${s.turn}` : '',
        s.ids ? `holds ${s.ids.join(' + ')}` : '',
      ].filter(Boolean);
      out.push(`      ${s.kind.padEnd(12)} ${s.id}  (${extra.join(', ')})`);
    }
  }
  if (r.reply !== undefined) out.push(`  reply        ${r.reply.length} chars`);
  if (r.usage) out.push(`  usage        prompt ${r.usage.prompt ?? '—'}, completion ${r.usage.completion ?? '—'} (as reported by the source)`);
  return out;
}

export function formatIssue(file: string, i: LogIssue): string {
  return `${file}:${i.line}:${i.column}: ${i.code}: ${i.message}`;
}
