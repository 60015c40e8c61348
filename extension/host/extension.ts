/**
 * Spillway's extension host entry: wires sessions, editor features, the panel and commands.
 * Activation registers listeners only; the tokenizer loads when the first log is audited.
 */
import { bundleStart } from './clock';
import * as vscode from 'vscode';
import { ActiveLog } from './activeLog';
import { registerCommands } from './commands';
import { LogDiagnostics, LogStatusBar, RecordCodeLenses, SegmentHover } from './editorFeatures';
import { GroundingHover } from './groundingHover';
import { watchLargeLogs } from './largeLogs';
import { disposeOutput, output } from './output';
import { PANEL_VIEW_ID, PanelProvider } from './panel';
import { LogSessions } from './sessions';
import { registerRepackCommands, RepackResults } from './repack';

/** When this module's body runs, every other module of the bundle has been evaluated. */
const bundleEvaluated = performance.now();

/** Documents the CodeLens and hover providers are asked about; sessions decide which are logs. */
const SELECTOR: vscode.DocumentSelector = [{ language: 'jsonl' }, { language: 'json' }, { language: 'plaintext' }, { language: 'log' }, { pattern: '**/*.{jsonl,ndjson}' }];

export function activate(context: vscode.ExtensionContext): void {
  const t0 = performance.now();
  const log = output();
  const sessions = new LogSessions(context.workspaceState);
  const active = new ActiveLog(sessions);
  const lenses = new RecordCodeLenses(sessions);
  const diagnostics = new LogDiagnostics(sessions);
  const status = new LogStatusBar();
  const panel = new PanelProvider(context.extensionUri, sessions, active);
  const repackResults = new RepackResults();

  context.subscriptions.push(
    sessions,
    active,
    lenses,
    diagnostics,
    status,
    panel,
    vscode.languages.registerCodeLensProvider(SELECTOR, lenses),
    vscode.languages.registerHoverProvider(SELECTOR, new SegmentHover(sessions)),
    vscode.languages.registerHoverProvider(SELECTOR, new GroundingHover(sessions)),
    vscode.window.registerWebviewViewProvider(PANEL_VIEW_ID, panel),
    sessions.onDidUpdate((s) => {
      void diagnostics.update(s);
      lenses.refresh();
      if (s === active.session) status.update(active);
    }),
    sessions.onDidRemove((s) => {
      diagnostics.clear(s.doc.uri);
      lenses.refresh();
    }),
    active.onDidChange(() => status.update(active)),
    ...registerCommands(sessions, active, panel),
    repackResults,
    panel.attachRepack(repackResults),
    ...registerRepackCommands(sessions, active, panel, repackResults),
    watchLargeLogs('spillway.auditLogToHtml'),
    { dispose: disposeOutput },
  );
  status.update(active);
  const t1 = performance.now();
  log.info(
    `Spillway activated: bundle evaluated in ${(bundleEvaluated - bundleStart).toFixed(1)} ms, activate() took ${(t1 - t0).toFixed(1)} ms ` +
      `(the tokenizer and validator load with the first log)`,
  );
}

export function deactivate(): void {
  // Everything is in context.subscriptions, disposed by VS Code.
}
