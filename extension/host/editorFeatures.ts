/** CodeLens, hover, diagnostics and the status bar item: thin adapters over the view builders. */
import * as vscode from 'vscode';
import { recordAtLine, spillwayRecordAt } from '../core/view/audited';
import { codeLensTitle, codeLensTooltip, logSummary, statusText, statusTooltip } from '../core/view/codeLens';
import { issueDiagnostic, logDiagnostics, onlyLooksLikeLog, recordDiagnostics, type DiagnosticDescriptor } from '../core/view/diagnostics';
import { groundingDiagnostics } from '../core/view/grounding';
import { segmentHoverRows } from '../core/view/hover';
import { charForRawColumn, locateRecordLine } from '../core/view/recordLine';
import type { ActiveLog } from './activeLog';
import type { LogSession, LogSessions } from './sessions';

export const OPEN_TURN_COMMAND = 'spillway.openTurn';

class RecordLens extends vscode.CodeLens {
  constructor(
    range: vscode.Range,
    readonly uri: vscode.Uri,
    readonly line: number,
  ) {
    super(range);
  }
}

export class RecordCodeLenses implements vscode.CodeLensProvider<RecordLens> {
  private readonly emitter = new vscode.EventEmitter<void>();
  readonly onDidChangeCodeLenses = this.emitter.event;

  constructor(private readonly sessions: LogSessions) {}

  refresh(): void {
    this.emitter.fire();
  }

  provideCodeLenses(doc: vscode.TextDocument): RecordLens[] {
    const log = this.sessions.get(doc.uri)?.log;
    if (!log) return [];
    const lenses: RecordLens[] = [];
    for (const r of log.records) {
      if (r.line > doc.lineCount) break;
      lenses.push(new RecordLens(new vscode.Range(r.line - 1, 0, r.line - 1, 0), doc.uri, r.line));
    }
    return lenses;
  }

  // Titles are built only for the lenses VS Code shows (a 100,000-record log stays cheap).
  resolveCodeLens(lens: RecordLens): RecordLens {
    const log = this.sessions.get(lens.uri)?.log;
    const rec = log && recordAtLine(log, lens.line);
    lens.command = rec
      ? { title: codeLensTitle(rec.ledger), tooltip: codeLensTooltip(rec.ledger), command: OPEN_TURN_COMMAND, arguments: [lens.uri.toString(), lens.line] }
      : { title: 'Spillway: auditing…', command: '' };
    return lens;
  }

  dispose(): void {
    this.emitter.dispose();
  }
}

export class SegmentHover implements vscode.HoverProvider {
  constructor(private readonly sessions: LogSessions) {}

  provideHover(doc: vscode.TextDocument, pos: vscode.Position): vscode.Hover | undefined {
    const rec = spillwayRecordAt(this.sessions.get(doc.uri), pos.line);
    if (!rec) return undefined;
    const lineText = doc.lineAt(pos.line).text;
    const map = locateRecordLine(lineText);
    const loc = map?.segments.find((s) => s.text && pos.character >= s.text.start && pos.character < s.text.end);
    if (!loc?.text) return undefined;
    const src = rec.record.segments[loc.index];
    const seg = rec.ledger.segments.find((s) => s.id === (loc.id ?? src?.id));
    if (!seg || !src) return undefined;
    const charIndex = charForRawColumn(lineText, loc.text, pos.character);
    const md = new vscode.MarkdownString(undefined, false);
    md.isTrusted = false;
    md.supportHtml = false;
    md.appendMarkdown('**Spillway**\n\n');
    for (const row of segmentHoverRows(seg, rec.ledger.budget, src.text.length, charIndex)) {
      md.appendMarkdown(`**${row.label}:** `);
      md.appendText(row.value);
      md.appendMarkdown('  \n');
    }
    return new vscode.Hover(md, new vscode.Range(pos.line, loc.text.start, pos.line, loc.text.end));
  }
}

const SEVERITY: Record<DiagnosticDescriptor['severity'], vscode.DiagnosticSeverity> = {
  error: vscode.DiagnosticSeverity.Error,
  warning: vscode.DiagnosticSeverity.Warning,
  information: vscode.DiagnosticSeverity.Information,
};

export class LogDiagnostics implements vscode.Disposable {
  readonly collection = vscode.languages.createDiagnosticCollection('spillway');
  /** Latest update per document; an older one still running stops when a newer one starts. */
  private readonly generation = new Map<string, number>();

  constructor(private readonly sessions: LogSessions) {}

  /**
   * Rebuilds a log's diagnostics. Locating values on a line means parsing it, so this works in
   * slices that yield to the event loop (a 10,000-record log must not stall the extension host).
   */
  async update(s: LogSession): Promise<void> {
    const log = s.log;
    if (!log) return;
    const key = s.doc.uri.toString();
    const gen = (this.generation.get(key) ?? 0) + 1;
    this.generation.set(key, gen);
    const doc = s.doc;
    const lineText = (line: number): string | undefined => (line >= 1 && line <= doc.lineCount ? doc.lineAt(line - 1).text : undefined);
    const checks = this.sessions.settings.checks;
    const out: vscode.Diagnostic[] = [];
    const add = (descs: DiagnosticDescriptor[]): void => {
      for (const d of descs) {
        const diag = new vscode.Diagnostic(new vscode.Range(d.line - 1, d.start, d.line - 1, d.end), d.message, SEVERITY[d.severity]);
        diag.code = d.code;
        diag.source = 'Spillway';
        if (d.related) diag.relatedInformation = d.related.map((r) => new vscode.DiagnosticRelatedInformation(new vscode.Location(doc.uri, new vscode.Range(r.line - 1, r.start, r.line - 1, r.end)), r.message));
        out.push(diag);
      }
    };
    if (onlyLooksLikeLog(log.records.length, log.issues.length)) add(logDiagnostics(log, lineText, checks));
    else {
      if (checks.malformed) for (const issue of log.issues) add([issueDiagnostic(issue, lineText(issue.line))]);
      let slice = performance.now();
      for (const rec of log.records) {
        if (performance.now() - slice > 12) {
          await new Promise((r) => setTimeout(r, 0));
          if (this.generation.get(key) !== gen || s.log !== log) return; // superseded
          slice = performance.now();
        }
        const text = lineText(rec.line);
        if (text !== undefined) {
          add(recordDiagnostics(rec, text, checks));
          add(groundingDiagnostics(rec, text, checks));
        }
      }
    }
    if (this.generation.get(key) === gen) this.collection.set(doc.uri, out);
  }

  clear(uri: vscode.Uri): void {
    this.generation.delete(uri.toString());
    this.collection.delete(uri);
  }

  dispose(): void {
    this.generation.clear();
    this.collection.dispose();
  }
}

export class LogStatusBar implements vscode.Disposable {
  readonly item = vscode.window.createStatusBarItem('spillway.summary', vscode.StatusBarAlignment.Left, 50);

  constructor() {
    this.item.name = 'Spillway log summary';
    this.item.command = 'spillway.showPanel';
  }

  update(active: ActiveLog): void {
    const s = active.session;
    if (!s || !active.inEditor) {
      this.item.hide();
      return;
    }
    if (!s.log) {
      this.item.text = '$(sync~spin) Spillway: auditing…';
      this.item.tooltip = `Spillway is auditing ${s.file}`;
      this.item.accessibilityInformation = { label: `Spillway is auditing ${s.file}` };
    } else {
      const sum = logSummary(s.log);
      this.item.text = statusText(sum);
      this.item.tooltip = statusTooltip(sum, s.file);
      this.item.accessibilityInformation = { label: `Spillway: ${statusText(sum).replace(/^\$\([^)]*\)\s*/, '')}`, role: 'button' };
    }
    this.item.show();
  }

  dispose(): void {
    this.item.dispose();
  }
}
