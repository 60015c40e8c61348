/**
 * Log sessions: one per open document recognised as a log. A session audits its document
 * (incrementally, debounced on edits; in slices with progress and cancellation) and announces each
 * new result; the editor features and the panel listen.
 */
import * as vscode from 'vscode';
import { detectFormat } from '../core/import/detect';
import type { ImportFormat, ImportOptions } from '../core/import/index';
import type { AuditedLog, AuditedRecord } from '../core/view/audited';
import { Cancelled, IncrementalAuditor, type LineDocument } from '../core/view/incremental';
import { hasLogExtension, sniffSpillway, SNIFF_LINES } from '../core/view/recognise';
import { auditOptionsFor, readEditorSettings, withSettingDefaults, type EditorSettings, type LogOverrides } from '../core/view/settings';
import { loadEngine, sharedAccountant } from './core';
import { output } from './output';

export type SessionFormat = 'spillway' | ImportFormat;

const OVERRIDES_KEY = 'spillway.logOverrides';
/** Documents with more lines than this audit with a cancellable notification; smaller ones in the status bar. */
const NOTIFY_LINES = 20_000;
const DEBOUNCE_MS = 300;
const SCHEMES_IGNORED = new Set(['output', 'git', 'debug', 'vscode-scm', 'comment', 'walkThroughSnippet']);

export function readSettings(): EditorSettings {
  const c = vscode.workspace.getConfiguration('spillway');
  return readEditorSettings((k) => c.get(k));
}

export function importOptions(): ImportOptions {
  const c = vscode.workspace.getConfiguration('spillway.import');
  const o: ImportOptions = {};
  const w = c.get<number>('window');
  const r = c.get<number>('reserve');
  const e = c.get<string>('encoding');
  const layout = c.get<string>('layout');
  const splitter = c.get<string>('splitter');
  if (typeof w === 'number' && w > 0) o.window = w;
  if (typeof r === 'number' && r >= 0) o.reserve = r;
  if (e) o.encoding = e;
  if (layout === 'exact' || layout === 'split') o.layout = layout;
  if (splitter === 'auto' || splitter === 'tag' || splitter === 'numbered' || splitter === 'separator' || splitter === 'none') o.splitter = { kind: splitter };
  return o;
}

class DocumentLines implements LineDocument {
  constructor(private readonly doc: vscode.TextDocument) {}
  get lineCount(): number {
    return this.doc.lineCount;
  }
  lineAt(line: number): string {
    return this.doc.lineAt(line - 1).text;
  }
}

export class LogSession {
  log: AuditedLog | undefined;
  /** Milliseconds the last audit took and how many lines it recomputed. */
  lastRun: { ms: number; recomputed: number; lines: number } | undefined;
  private auditor: IncrementalAuditor | undefined;
  private running: AbortController | undefined;
  private timer: ReturnType<typeof setTimeout> | undefined;

  constructor(
    readonly doc: vscode.TextDocument,
    readonly format: SessionFormat,
    private readonly owner: LogSessions,
  ) {}

  get key(): string {
    return this.doc.uri.toString();
  }

  get file(): string {
    return vscode.workspace.asRelativePath(this.doc.uri, false);
  }

  /** Forget cached ledgers (settings or overrides changed) and audit again. */
  reset(): void {
    this.auditor = undefined;
    void this.refresh();
  }

  scheduleRefresh(): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = setTimeout(() => {
      this.timer = undefined;
      void this.refresh();
    }, DEBOUNCE_MS);
  }

  cancel(): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = undefined;
    this.running?.abort();
    this.running = undefined;
  }

  async refresh(): Promise<void> {
    this.running?.abort();
    const ac = new AbortController();
    this.running = ac;
    // Never audit inside the caller's turn (e.g. activate()): loading the engine is slow.
    await new Promise((r) => setTimeout(r, 0));
    if (ac.signal.aborted) return;
    const t0 = performance.now();
    const big = this.doc.lineCount > NOTIFY_LINES;
    try {
      const result = await vscode.window.withProgress(
        {
          location: big ? vscode.ProgressLocation.Notification : vscode.ProgressLocation.Window,
          title: `Spillway: auditing ${this.file}`,
          cancellable: big,
        },
        async (progress, token) => {
          token.onCancellationRequested(() => ac.abort());
          let last = 0;
          return this.audit(ac.signal, (done, total) => {
            const pct = total > 0 ? (100 * done) / total : 100;
            progress.report({ increment: pct - last, message: `${done.toLocaleString('en-US')} of ${total.toLocaleString('en-US')} lines` });
            last = pct;
            this.owner.progress(this, done, total);
          });
        },
      );
      if (ac.signal.aborted) return;
      this.log = result.log;
      this.lastRun = { ms: performance.now() - t0, recomputed: result.recomputed, lines: this.doc.lineCount };
      output().info(
        `Audited ${this.file}: ${result.log.records.length} records, ${result.log.issues.length} line problems, ` +
          `${result.recomputed} lines recomputed of ${this.doc.lineCount}, in ${this.lastRun.ms.toFixed(1)} ms`,
      );
      this.owner.updated(this);
    } catch (e) {
      if (e instanceof Cancelled || ac.signal.aborted) {
        output().info(`Audit of ${this.file} cancelled`);
        return;
      }
      output().error(`Audit of ${this.file} failed: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`);
      void vscode.window.showErrorMessage(`Spillway could not audit ${this.file}: ${e instanceof Error ? e.message : String(e)}`);
    } finally {
      if (this.running === ac) this.running = undefined;
    }
  }

  private async audit(signal: AbortSignal, onProgress: (done: number, total: number) => void): Promise<{ log: AuditedLog; recomputed: number }> {
    const settings = this.owner.settings;
    const opts = auditOptionsFor(settings, this.owner.overrides(this.doc.uri));
    const acct = await sharedAccountant();
    const { auditRecord, convertText, parseRecordLine, encodingForModel, analyseTurn, loadShingleHasher } = loadEngine();
    // Reply grounding (spillway.grounding.*): per record, so the incremental cache keeps it with the ledger.
    const grounding = settings.grounding.enabled ? settings.grounding.analysis : undefined;
    if (grounding) await loadShingleHasher();
    const analysed = (record: AuditedRecord['record'], ledger: AuditedRecord['ledger']): AuditedRecord['ledger'] => {
      if (grounding) ledger.analysis = analyseTurn(record, ledger, grounding);
      return ledger;
    };
    if (this.format !== 'spillway') {
      // Chat / OTLP logs: converted in memory, never written; the accountant's memo keeps re-audits cheap.
      const converted = convertText(this.doc.getText(), this.format, importOptions());
      const records: AuditedRecord[] = [];
      const issues = [...converted.issues];
      let i = 0;
      for (const located of converted.records) {
        if (signal.aborted) throw new Cancelled();
        try {
          const ledger = analysed(located.record, await auditRecord({ ...located, record: withSettingDefaults(located.record, settings, encodingForModel) }, opts, acct));
          records.push({ line: located.line, record: located.record, ledger });
        } catch (e) {
          issues.push({ line: located.line, column: 1, code: 'audit-failed', message: e instanceof Error ? e.message : String(e) });
        }
        if (++i % 200 === 0) {
          onProgress(i, converted.records.length);
          await new Promise((r) => setTimeout(r, 0));
        }
      }
      records.sort((a, b) => a.line - b.line);
      issues.sort((a, b) => a.line - b.line);
      return { log: { file: this.file, records, issues }, recomputed: converted.records.length };
    }
    this.auditor ??= new IncrementalAuditor({
      parse: parseRecordLine,
      audit: async (located) => analysed(located.record, await auditRecord({ ...located, record: withSettingDefaults(located.record, settings, encodingForModel) }, opts, acct)),
      maxLineLength: settings.maxLineLength,
    });
    return this.auditor.run(new DocumentLines(this.doc), this.file, { signal, onProgress });
  }
}

/** Recognises logs among open documents and keeps one session per log. */
export class LogSessions implements vscode.Disposable {
  private readonly sessions = new Map<string, LogSession>();
  private readonly disposables: vscode.Disposable[] = [];
  private readonly updatedEmitter = new vscode.EventEmitter<LogSession>();
  private readonly removedEmitter = new vscode.EventEmitter<LogSession>();
  private readonly progressEmitter = new vscode.EventEmitter<{ session: LogSession; done: number; total: number }>();
  readonly onDidUpdate = this.updatedEmitter.event;
  readonly onDidRemove = this.removedEmitter.event;
  readonly onProgress = this.progressEmitter.event;
  settings: EditorSettings = readSettings();

  constructor(private readonly state: vscode.Memento) {
    this.disposables.push(
      this.updatedEmitter,
      this.removedEmitter,
      this.progressEmitter,
      vscode.workspace.onDidOpenTextDocument((d) => this.consider(d)),
      vscode.workspace.onDidCloseTextDocument((d) => this.remove(d.uri)),
      vscode.workspace.onDidChangeTextDocument((e) => {
        const s = this.sessions.get(e.document.uri.toString());
        if (s && e.contentChanges.length > 0) s.scheduleRefresh();
        else if (!s && e.contentChanges.length > 0 && e.document.lineCount <= SNIFF_LINES * 4) this.consider(e.document);
      }),
      vscode.workspace.onDidChangeConfiguration((e) => {
        if (!e.affectsConfiguration('spillway')) return;
        this.settings = readSettings();
        if (e.affectsConfiguration('spillway.logFilePatterns')) vscode.workspace.textDocuments.forEach((d) => this.consider(d));
        for (const s of this.sessions.values()) s.reset();
      }),
    );
    vscode.workspace.textDocuments.forEach((d) => this.consider(d));
  }

  get(uri: vscode.Uri): LogSession | undefined {
    return this.sessions.get(uri.toString());
  }

  all(): IterableIterator<LogSession> {
    return this.sessions.values();
  }

  overrides(uri: vscode.Uri): LogOverrides | undefined {
    return this.state.get<Record<string, LogOverrides>>(OVERRIDES_KEY, {})[uri.toString()];
  }

  async setOverrides(uri: vscode.Uri, o: LogOverrides | undefined): Promise<void> {
    const all = { ...this.state.get<Record<string, LogOverrides>>(OVERRIDES_KEY, {}) };
    if (o && Object.keys(o).length > 0) all[uri.toString()] = o;
    else delete all[uri.toString()];
    await this.state.update(OVERRIDES_KEY, all);
    this.get(uri)?.reset();
  }

  /** Whether a document is a log; starts its session when it is. */
  consider(doc: vscode.TextDocument): LogSession | undefined {
    const key = doc.uri.toString();
    const existing = this.sessions.get(key);
    if (existing) return existing;
    if (SCHEMES_IGNORED.has(doc.uri.scheme)) return undefined;
    const byName =
      hasLogExtension(doc.uri.path) ||
      doc.languageId === 'jsonl' ||
      this.settings.logFilePatterns.some((pattern) => vscode.languages.match({ pattern }, doc) > 0);
    if (!byName) return undefined;
    const first: string[] = [];
    for (let i = 0; i < doc.lineCount && first.length < SNIFF_LINES && i < 200; i++) {
      const t = doc.lineAt(i).text;
      if (t.trim() !== '') first.push(t);
    }
    const detected = detectFormat(first);
    let format: SessionFormat | undefined;
    if (detected === 'spillway' || detected === 'chat' || detected === 'otlp') format = detected;
    else if (sniffSpillway(first) !== 'no') format = 'spillway'; // only looks like a log: one message, from the diagnostics
    if (!format) return undefined;
    const s = new LogSession(doc, format, this);
    this.sessions.set(key, s);
    output().info(`Recognised ${s.file} as a ${format === 'spillway' ? 'Spillway' : format} log`);
    void s.refresh();
    return s;
  }

  private remove(uri: vscode.Uri): void {
    const s = this.sessions.get(uri.toString());
    if (!s) return;
    s.cancel();
    this.sessions.delete(uri.toString());
    this.removedEmitter.fire(s);
  }

  /** Called by a session when a new audit result is in. */
  updated(s: LogSession): void {
    if (this.sessions.get(s.key) === s) this.updatedEmitter.fire(s);
  }

  progress(s: LogSession, done: number, total: number): void {
    this.progressEmitter.fire({ session: s, done, total });
  }

  dispose(): void {
    for (const s of this.sessions.values()) s.cancel();
    this.sessions.clear();
    this.disposables.forEach((d) => d.dispose());
  }
}
