/**
 * A self-contained HTML audit report: no script, nothing remote, every text escaped.
 * Carries a privacy notice because logs can hold personal data.
 */
import { formatAnalysisSummary, TEXT_COLUMNS, textRow } from './text';
import type { TurnAnalysis } from '../analysis/types';
import type { AuditReport, Ledger } from './types';

export function escapeHtml(s: string): string {
  return s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

export const PRIVACY_NOTICE =
  'This report is derived from a prompt-assembly log and can contain personal data from conversations and retrieved documents. Share it only where the log itself may be shared.';

function segmentTable(l: Ledger): string {
  const rows = l.segments
    .map(
      (s) =>
        `<tr class="${s.fate}"><td>${escapeHtml(s.id)}</td><td>${s.kind}</td><td>${s.role}</td><td>${s.rank ?? ''}</td><td class="num">${s.tokens}</td><td class="num">${s.keptTokens}</td><td>${fateMark(s.fate)} ${s.fate}</td><td>${s.cut ? `token ${s.cut.token}, char ${s.cut.char}` : ''}</td></tr>`,
    )
    .join('');
  return `<table class="seg"><thead><tr><th>segment</th><th>kind</th><th>role</th><th>rank</th><th>tokens</th><th>kept</th><th>fate</th><th>cut point</th></tr></thead><tbody>${rows}</tbody></table>`;
}

const LABEL_TEXT: Record<string, string> = {
  supported: 'supported',
  unsupported: 'unsupported',
  lost: 'supported only by text the budget cut',
  skipped: 'too short to judge',
};

function groundingDetail(a: TurnAnalysis | undefined): string {
  if (!a || !a.sentences.length) return '';
  const items = a.sentences
    .map((s) => {
      const by = s.label === 'supported' ? s.kept : s.label === 'lost' ? s.spilled : null;
      const how = by ? ` — ${escapeHtml(by.id)} (${(100 * by.share).toFixed(0)}%: ${escapeHtml(by.overlap.join(', '))})` : '';
      return `<li class="s-${s.label}"><strong>${LABEL_TEXT[s.label] ?? s.label}</strong>: ${escapeHtml(s.text)}${how}</li>`;
    })
    .join('');
  const kf1 = a.knowledgeF1 === null ? '' : `<p>Knowledge F1 (${a.knowledgeF1Basis}): ${a.knowledgeF1.toFixed(3)}${a.flags.length ? ` · flags: ${a.flags.map(escapeHtml).join(', ')}` : ''}</p>`;
  return `<h4>Reply grounding</h4>${kf1}<ul>${items}</ul>`;
}

const fateMark = (f: string): string => (f === 'kept' ? '●' : f === 'clipped' ? '◐' : '○');

export function renderHtmlReport(report: AuditReport, extraSections: string[] = []): string {
  const s = report.summary;
  const head = TEXT_COLUMNS.map((c) => `<th>${escapeHtml(c)}</th>`).join('');
  const body = report.records
    .map((l) => {
      const cells = textRow(l)
        .map((c, i) => `<td${i > 1 ? ' class="num"' : ''}>${escapeHtml(c)}</td>`)
        .join('');
      return `<tr class="${l.state}">${cells}</tr><tr class="detail"><td colspan="${TEXT_COLUMNS.length}"><details><summary>segments of line ${l.line}</summary>${segmentTable(l)}${groundingDetail(l.analysis)}${l.notes.length ? `<ul>${l.notes.map((x) => `<li>${escapeHtml(x)}</li>`).join('')}</ul>` : ''}</details></td></tr>`;
    })
    .join('\n');
  const errors = report.errors.map((e) => `<li>line ${e.line}, column ${e.column}: ${escapeHtml(e.message)} <code>${escapeHtml(e.code)}</code></li>`).join('');
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'">
<title>Spillway audit — ${escapeHtml(report.file)}</title>
<style>
body{font:14px/1.4 system-ui,sans-serif;margin:1.5rem;color:#1b1b1b;background:#fff}
table{border-collapse:collapse;margin:.5rem 0}th,td{border-bottom:1px solid #ddd;padding:.2rem .5rem;text-align:left}
td.num{text-align:right;font-variant-numeric:tabular-nums}tr.over-budget td,tr.over-before-passages td{background:#fde8e8}
tr.clipped td{background:#fff6da}li.s-unsupported strong{color:#a4000f}li.s-lost strong{color:#8a5a00}tr.dropped td{color:#777;text-decoration:line-through}
.notice{border:1px solid #c9a227;background:#fff9e6;padding:.5rem .75rem}
</style></head><body>
<h1>Spillway audit</h1>
<p class="notice"><strong>Privacy:</strong> ${escapeHtml(PRIVACY_NOTICE)}</p>
<p>File: <code>${escapeHtml(report.file)}</code>${Object.keys(report.options).length ? ` — what-if: <code>${escapeHtml(JSON.stringify(report.options))}</code>` : ''}</p>
<ul>
<li>turns: ${s.turns} in ${s.conversations} conversation(s)</li>
<li>over budget: ${s.overBudget} (over before any passage: ${s.overBeforePassages})</li>
<li>rank-1 passage clipped: ${s.rank1Clipped}, dropped: ${s.rank1Dropped}</li>
<li>spill: ${s.spill} tokens not sent</li>
<li>malformed lines: ${s.malformed}</li>
</ul>
${errors ? `<h2>Malformed lines</h2><ul>${errors}</ul>` : ''}
${report.analysisSummary ? `<h2>Grounding</h2><pre>${escapeHtml(formatAnalysisSummary(report.analysisSummary))}</pre>` : ''}
${extraSections.join('\n')}
<h2>Turns</h2>
<table><thead><tr>${head}</tr></thead><tbody>
${body}
</tbody></table>
</body></html>
`;
}
