/**
 * Hover on a record's reply (label, supporting passage and shared words of the sentence under the
 * pointer) and on a passage's text (its Knowledge F1 and BM25+ rank). A thin adapter over
 * core/view/grounding.ts; VS Code shows it beside the segment hover.
 */
import * as vscode from 'vscode';
import { spillwayRecordAt } from '../core/view/audited';
import { locateGroundingLine, passageGroundingRows, sentenceAt, sentenceHoverRows, type GroundingHoverRow } from '../core/view/grounding';
import { decodedOffsetAt, jsonStringColumns } from '../core/view/jsonColumns';
import type { LogSessions } from './sessions';

function markdown(title: string, rows: readonly GroundingHoverRow[]): vscode.MarkdownString {
  const md = new vscode.MarkdownString(undefined, false);
  md.isTrusted = false;
  md.supportHtml = false;
  md.appendMarkdown(`**${title}**\n\n`);
  for (const row of rows) {
    md.appendMarkdown(`**${row.label}:** `);
    md.appendText(row.value); // ids and words come from the log: text, never markdown
    md.appendMarkdown('  \n');
  }
  return md;
}

export class GroundingHover implements vscode.HoverProvider {
  constructor(private readonly sessions: LogSessions) {}

  provideHover(doc: vscode.TextDocument, pos: vscode.Position): vscode.Hover | undefined {
    const a = spillwayRecordAt(this.sessions.get(doc.uri), pos.line)?.ledger.analysis;
    if (!a) return undefined;
    const lineText = doc.lineAt(pos.line).text;
    const map = locateGroundingLine(lineText);
    if (!map) return undefined;
    const col = pos.character;
    if (map.reply && col > map.reply.start && col < map.reply.end - 1) {
      const cols = jsonStringColumns(lineText, map.reply.start);
      const s = sentenceAt(a, decodedOffsetAt(cols, col));
      if (!s) return undefined;
      const last = cols.length - 1;
      const range = new vscode.Range(pos.line, cols[Math.min(s.start, last)]!, pos.line, cols[Math.min(s.end, last)]!);
      return new vscode.Hover(markdown('Spillway · reply grounding', sentenceHoverRows(a, s)), range);
    }
    for (const [id, span] of map.texts) {
      if (col < span.start || col >= span.end) continue;
      const rows = passageGroundingRows(a, id);
      return rows.length ? new vscode.Hover(markdown('Spillway · grounding', rows), new vscode.Range(pos.line, span.start, pos.line, span.end)) : undefined;
    }
    return undefined;
  }
}
