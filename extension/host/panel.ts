/**
 * The side panel: a webview view in Spillway's activity-bar container. The host end of the typed
 * protocol: every incoming message is validated, requests are answered from the active log's audit
 * (a page of rows, one turn's detail, one conversation, the overview), and the panel follows the
 * active log and the editor cursor.
 */
import * as vscode from 'vscode';
import { randomBytes } from 'node:crypto';
import { recordAtLine } from '../core/view/audited';
import { buildOverview, conversationRows, toTurnDetail, turnPage } from '../core/view/viewModels';
import { locateRecordLine } from '../core/view/recordLine';
import type { HostMessage, WebviewMessage } from '../protocol/messages';
import { parseWebviewMessage } from '../protocol/validate';
import type { ActiveLog } from './activeLog';
import { loadEngine, sharedAccountant } from './core';
import { output } from './output';
import type { LogSession, LogSessions } from './sessions';
import type { RepackResults } from './repack';

export const PANEL_VIEW_ID = 'spillway.panel';

export class PanelProvider implements vscode.WebviewViewProvider, vscode.Disposable {
  private view: vscode.WebviewView | undefined;
  private ready = false;
  /** Record line most recently selected (by the panel or the editor cursor); keeps both ends in step. */
  private selectedLine: number | undefined;
  /** A turn asked for before the panel was ready (CodeLens click, restored panel state). */
  private pendingLine: number | undefined;
  /** Log last announced to the webview, with its audit, so re-audits re-announce. */
  private announced: { session: LogSession; log: unknown } | undefined;
  private readonly disposables: vscode.Disposable[] = [];
  private viewDisposables: vscode.Disposable[] = [];
  /** Re-pack comparison and sweep results (extension/host/repack.ts); they answer their own requests. */
  private repack: RepackResults | undefined;

  constructor(
    private readonly extensionUri: vscode.Uri,
    private readonly sessions: LogSessions,
    private readonly active: ActiveLog,
  ) {
    this.disposables.push(
      active.onDidChange(() => this.announce()),
      sessions.onDidUpdate((s) => {
        if (s === active.session) this.announce();
      }),
      sessions.onProgress(({ session, done, total }) => {
        if (session === active.session) this.post({ type: 'progress', done, total, label: `Auditing ${session.file}` });
      }),
      vscode.window.onDidChangeTextEditorSelection((e) => this.cursorMoved(e)),
    );
  }

  resolveWebviewView(view: vscode.WebviewView): void {
    this.view = view;
    this.ready = false;
    this.announced = undefined;
    const root = vscode.Uri.joinPath(this.extensionUri, 'dist', 'webview');
    view.webview.options = { enableScripts: true, enableCommandUris: false, localResourceRoots: [root] };
    view.webview.html = this.html(view.webview, root);
    this.viewDisposables.forEach((d) => d.dispose());
    this.viewDisposables = [
      view.webview.onDidReceiveMessage((m: unknown) => void this.receive(m)),
      view.onDidDispose(() => {
        if (this.view === view) {
          this.view = undefined;
          this.ready = false;
        }
      }),
    ];
  }

  /** Opens the panel; with a line, on that turn. */
  async show(line?: number): Promise<void> {
    if (line !== undefined) {
      this.selectedLine = line;
      if (!this.ready) this.pendingLine = line;
    }
    await vscode.commands.executeCommand(`${PANEL_VIEW_ID}.focus`);
    if (line !== undefined && this.ready) this.post({ type: 'selectTurn', line });
  }

  /** Posts what the re-pack results publish and routes the comparison requests to them. */
  attachRepack(results: RepackResults): vscode.Disposable {
    this.repack = results;
    return results.onDidPublish((m) => {
      if (!this.view || !this.ready) return; // announced again when the webview says ready
      this.post(m);
      results.delivered(m.type);
    });
  }

  /** Select a turn in the panel without focusing it (used by navigation commands). */
  selectTurn(line: number): void {
    this.selectedLine = line;
    if (this.ready) this.post({ type: 'selectTurn', line });
  }

  private html(webview: vscode.Webview, root: vscode.Uri): string {
    const nonce = randomBytes(16).toString('base64');
    const script = webview.asWebviewUri(vscode.Uri.joinPath(root, 'main.js'));
    const css = webview.asWebviewUri(vscode.Uri.joinPath(root, 'panel.css'));
    const src = webview.cspSource;
    const csp = `default-src 'none'; script-src 'nonce-${nonce}'; style-src ${src}; font-src ${src}; img-src ${src}`;
    return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="UTF-8">
<meta http-equiv="Content-Security-Policy" content="${csp}">
<meta name="viewport" content="width=device-width, initial-scale=1.0">
<link rel="stylesheet" href="${css.toString()}">
<title>Spillway</title>
</head>
<body>
<main id="app" aria-label="Spillway ledger"></main>
<script nonce="${nonce}" src="${script.toString()}"></script>
</body>
</html>`;
  }

  private post(m: HostMessage): void {
    if (this.view && this.ready) void this.view.webview.postMessage(m);
  }

  /** Tells the webview which log is active (again after each re-audit). */
  private announce(): void {
    if (!this.ready) return;
    const s = this.active.session;
    if (!s?.log) {
      if (!s) this.post({ type: 'logClosed' });
      this.announced = undefined;
      return;
    }
    if (this.announced?.session === s && this.announced.log === s.log) return;
    const sameLog = this.announced?.session === s;
    this.announced = { session: s, log: s.log };
    if (!sameLog) this.selectedLine = this.pendingLine ?? this.cursorRecordLine(s) ?? undefined;
    this.pendingLine = undefined;
    const selectLine = this.selectedLine !== undefined && recordAtLine(s.log, this.selectedLine) ? this.selectedLine : undefined;
    this.post({ type: 'logOpened', file: s.file, turns: s.log.records.length, ...(selectLine !== undefined ? { selectLine } : {}) });
  }

  private cursorRecordLine(s: LogSession): number | undefined {
    const e = vscode.window.activeTextEditor;
    if (!s.log || e?.document !== s.doc) return undefined;
    const line = e.selection.active.line + 1;
    return recordAtLine(s.log, line) ? line : undefined;
  }

  private cursorMoved(e: vscode.TextEditorSelectionChangeEvent): void {
    const s = this.active.session;
    if (!s?.log || e.textEditor.document !== s.doc) return;
    // Only a user's (or a command's) move steers the panel: a selection VS Code restores after a
    // reload (kind undefined) must not override the turn the panel restored from its own state.
    if (e.kind === undefined) return;
    const line = e.selections[0]!.active.line + 1;
    if (line === this.selectedLine || !recordAtLine(s.log, line)) return;
    this.selectedLine = line;
    this.post({ type: 'selectTurn', line });
  }

  private async receive(raw: unknown): Promise<void> {
    const parsed = parseWebviewMessage(raw);
    if (!parsed.ok) {
      output().warn(`Panel message rejected: ${parsed.error}`);
      return;
    }
    try {
      await this.handle(parsed.message);
    } catch (e) {
      const requestId = 'requestId' in parsed.message ? parsed.message.requestId : undefined;
      output().error(`Panel request ${parsed.message.type} failed: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`);
      this.post({ type: 'error', ...(requestId !== undefined ? { requestId } : {}), message: e instanceof Error ? e.message : String(e) });
    }
  }

  private async handle(m: WebviewMessage): Promise<void> {
    const s = this.active.session;
    const log = s?.log;
    const noLog = (requestId: number): void => this.post({ type: 'error', requestId, message: 'No Spillway log is open.' });
    switch (m.type) {
      case 'ready': {
        this.ready = true;
        this.announced = undefined;
        // A CodeLens click that opened the panel wins over the turn the panel shows when restored.
        this.pendingLine ??= m.state?.line;
        if (!s) this.post({ type: 'logClosed' });
        this.announce();
        for (const r of this.repack?.announcements() ?? []) this.post(r);
        return;
      }
      case 'requestTurns': {
        if (!log) return noLog(m.requestId);
        const page = turnPage(log, m.offset, m.limit);
        this.post({ type: 'turns', requestId: m.requestId, ...page });
        return;
      }
      case 'requestTurn': {
        if (!log) return noLog(m.requestId);
        const rec = recordAtLine(log, m.line);
        if (!rec) return this.post({ type: 'error', requestId: m.requestId, message: `Line ${m.line} holds no audited record.` });
        this.selectedLine = m.line;
        this.post({ type: 'turn', requestId: m.requestId, detail: toTurnDetail(rec, loadEngine().words) });
        return;
      }
      case 'requestConversation': {
        if (!log) return noLog(m.requestId);
        this.post({ type: 'conversation', requestId: m.requestId, conversation: m.conversation, rows: conversationRows(log, m.conversation) });
        return;
      }
      case 'requestOverview': {
        if (!log) return noLog(m.requestId);
        this.post({ type: 'overview', requestId: m.requestId, overview: buildOverview(log) });
        return;
      }
      case 'requestTokenBoundaries': {
        if (!log) return noLog(m.requestId);
        const rec = recordAtLine(log, m.line);
        const seg = rec?.record.segments.find((x) => x.id === m.segmentId);
        if (!rec || !seg) return this.post({ type: 'error', requestId: m.requestId, message: `No segment "${m.segmentId}" on line ${m.line}.` });
        const acct = await sharedAccountant();
        const { resolveEncoding, tokenBoundaries } = loadEngine();
        const encoder = await acct.encoder(resolveEncoding(rec.record, { encoding: rec.ledger.encoding }));
        this.post({ type: 'tokenBoundaries', requestId: m.requestId, line: m.line, segmentId: m.segmentId, boundaries: tokenBoundaries(encoder, seg.text) });
        return;
      }
      case 'revealLine': {
        if (!s || !log || !recordAtLine(log, m.line)) return;
        await this.reveal(s, m.line, m.segmentId);
        return;
      }
      case 'requestComparisonPage':
      case 'requestComparisonTurn': {
        if (!this.repack) return this.post({ type: 'error', requestId: m.requestId, message: 'No re-pack comparison yet.' });
        this.post(await this.repack.answer(m));
        return;
      }
      case 'metric': {
        output().info(`Panel ${m.name}: ${m.value.toFixed(1)} ms`);
        return;
      }
      default: {
        const never: never = m;
        output().warn(`Unhandled panel message ${JSON.stringify(never)}`);
      }
    }
  }

  /** Reveals and selects the record line (or the segment's text value) in an editor, without taking focus. */
  private async reveal(s: LogSession, line: number, segmentId?: string): Promise<void> {
    if (line > s.doc.lineCount) return;
    this.selectedLine = line;
    const text = s.doc.lineAt(line - 1).text;
    let range = new vscode.Range(line - 1, 0, line - 1, text.length);
    if (segmentId && s.format === 'spillway') {
      const lit = locateRecordLine(text)?.segments.find((x) => x.id === segmentId)?.text;
      if (lit) range = new vscode.Range(line - 1, lit.start, line - 1, lit.end);
    }
    const existing = this.active.editor();
    const editor = await vscode.window.showTextDocument(s.doc, {
      viewColumn: existing?.viewColumn ?? vscode.ViewColumn.One,
      preserveFocus: true,
      preview: false,
    });
    editor.selection = new vscode.Selection(range.start, range.end);
    editor.revealRange(range, vscode.TextEditorRevealType.InCenterIfOutsideViewport);
  }

  dispose(): void {
    this.viewDisposables.forEach((d) => d.dispose());
    this.disposables.forEach((d) => d.dispose());
  }
}
