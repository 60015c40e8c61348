/**
 * Which log the status bar and the panel follow: the log in the active editor, or the last one
 * (focus moving to the panel or another view keeps it). Sets the `spillway.activeLog` context key.
 */
import * as vscode from 'vscode';
import type { LogSession, LogSessions } from './sessions';

export class ActiveLog implements vscode.Disposable {
  private current: LogSession | undefined;
  /** Whether the active editor shows the current log (the status bar shows only then). */
  inEditor = false;
  private readonly emitter = new vscode.EventEmitter<LogSession | undefined>();
  readonly onDidChange = this.emitter.event;
  private readonly disposables: vscode.Disposable[] = [this.emitter];

  constructor(private readonly sessions: LogSessions) {
    this.disposables.push(
      vscode.window.onDidChangeActiveTextEditor((e) => this.follow(e)),
      sessions.onDidUpdate((s) => {
        // A log recognised after its editor became active (first audit finished).
        if (!this.current && vscode.window.activeTextEditor?.document === s.doc) this.follow(vscode.window.activeTextEditor);
      }),
      sessions.onDidRemove((s) => {
        if (s === this.current) this.set(undefined, false);
      }),
    );
    this.follow(vscode.window.activeTextEditor);
  }

  get session(): LogSession | undefined {
    return this.current;
  }

  /** The visible editor showing the current log, if any. */
  editor(): vscode.TextEditor | undefined {
    const doc = this.current?.doc;
    if (!doc) return undefined;
    const active = vscode.window.activeTextEditor;
    if (active?.document === doc) return active;
    return vscode.window.visibleTextEditors.find((e) => e.document === doc);
  }

  /** Make `s` the current log (e.g. a CodeLens of a log in a non-active editor was clicked). */
  select(s: LogSession): void {
    this.set(s, vscode.window.activeTextEditor?.document === s.doc);
  }

  private follow(e: vscode.TextEditor | undefined): void {
    if (!e) return; // focus left the editors: keep the last log
    const s = this.sessions.get(e.document.uri) ?? this.sessions.consider(e.document);
    if (s) this.set(s, true);
    else if (this.inEditor) this.set(this.current, false);
  }

  private set(s: LogSession | undefined, inEditor: boolean): void {
    const changed = s !== this.current;
    const visChanged = inEditor !== this.inEditor;
    this.current = s;
    this.inEditor = inEditor;
    void vscode.commands.executeCommand('setContext', 'spillway.activeLog', !!s && inEditor);
    if (changed || visChanged) this.emitter.fire(s);
  }

  dispose(): void {
    this.disposables.forEach((d) => d.dispose());
  }
}
