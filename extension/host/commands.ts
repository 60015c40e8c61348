/** The palette commands (category "Spillway") and the internal CodeLens command. */
import * as vscode from 'vscode';
import { recordAtLine } from '../core/view/audited';
import { findProblemTurn, problemReasons } from '../core/view/problems';
import { parseTokenCount, validateTokenCount, type LogOverrides } from '../core/view/settings';
import { fmt } from '../core/view/format';
import type { ActiveLog } from './activeLog';
import { OPEN_TURN_COMMAND } from './editorFeatures';
import { loadEngine } from './core';
import type { PanelProvider } from './panel';
import { auditToHtml } from './report';
import type { LogSession, LogSessions } from './sessions';

export const COMMANDS = {
  showPanel: 'spillway.showPanel',
  openTurn: OPEN_TURN_COMMAND,
  nextProblem: 'spillway.nextProblemTurn',
  previousProblem: 'spillway.previousProblemTurn',
  auditToHtml: 'spillway.auditLogToHtml',
  changeOptions: 'spillway.changeLogBudget',
} as const;

function requireLog(active: ActiveLog): LogSession | undefined {
  const s = active.session;
  if (!s) void vscode.window.showInformationMessage('Spillway: open a Spillway log (.jsonl) in the editor first.');
  return s;
}

async function goToProblem(active: ActiveLog, sessions: LogSessions, panel: PanelProvider, dir: 1 | -1): Promise<void> {
  const s = requireLog(active);
  if (!s) return;
  if (!s.log) {
    void vscode.window.showInformationMessage('Spillway: the log is still being audited.');
    return;
  }
  const editor = active.editor() ?? (await vscode.window.showTextDocument(s.doc));
  const here = editor.selection.active.line + 1;
  const checks = sessions.settings.checks;
  const rec = findProblemTurn(s.log.records, here, dir, checks);
  if (!rec) {
    void vscode.window.showInformationMessage('Spillway: no problem turns in this log under the enabled checks.');
    return;
  }
  const range = new vscode.Range(rec.line - 1, 0, rec.line - 1, 0);
  editor.selection = new vscode.Selection(range.start, range.start);
  editor.revealRange(range, vscode.TextEditorRevealType.InCenterIfOutsideViewport);
  panel.selectTurn(rec.line);
  vscode.window.setStatusBarMessage(`Spillway: line ${rec.line} — ${problemReasons(rec, checks).join(', ')}`, 5000);
}

async function changeOptions(active: ActiveLog, sessions: LogSessions): Promise<void> {
  const s = requireLog(active);
  if (!s) return;
  const current: LogOverrides = { ...(sessions.overrides(s.doc.uri) ?? {}) };
  const first = s.log?.records[0]?.ledger;
  const describe = (v: number | string | undefined, own: string): string => (v === undefined ? `the log's own (${own})` : String(v));
  const pick = await vscode.window.showQuickPick(
    [
      { label: 'Budget', field: 'budget' as const, description: describe(current.budget, first ? `${fmt(first.budget)} on the first record` : 'per record') },
      { label: 'Reserve', field: 'reserve' as const, description: describe(current.reserve, first ? `${fmt(first.reserve)} on the first record` : 'per record') },
      { label: 'Encoding', field: 'encoding' as const, description: describe(current.encoding, first?.encoding ?? 'per record') },
      { label: 'Reset all to the log’s own values', field: 'reset' as const, description: '' },
    ],
    { title: `Spillway: change what ${s.file} is audited with`, placeHolder: 'Choose what to change' },
  );
  if (!pick) return;
  if (pick.field === 'reset') {
    await sessions.setOverrides(s.doc.uri, undefined);
    return;
  }
  if (pick.field === 'encoding') {
    const { ENCODINGS, isEncodingName } = loadEngine();
    const enc = await vscode.window.showQuickPick(
      [{ label: 'Use each record’s own encoding', value: undefined as string | undefined }, ...ENCODINGS.map((e) => ({ label: e, value: e as string | undefined }))],
      { title: 'Spillway: tokenizer encoding for this log', placeHolder: 'Encoding' },
    );
    if (!enc) return;
    if (enc.value && isEncodingName(enc.value)) current.encoding = enc.value;
    else delete current.encoding;
  } else {
    const field = pick.field;
    const input = await vscode.window.showInputBox({
      title: `Spillway: ${field} for this log (tokens)`,
      prompt: field === 'budget' ? 'Tokens the prompt may use (window − reserve). Empty = each record’s own.' : 'Tokens kept free for the reply. Empty = each record’s own.',
      value: current[field] !== undefined ? String(current[field]) : '',
      validateInput: (v) => validateTokenCount(v, field),
    });
    if (input === undefined) return;
    const n = parseTokenCount(input);
    if (n === undefined) delete current[field];
    else current[field] = n;
  }
  await sessions.setOverrides(s.doc.uri, current);
}

export function registerCommands(sessions: LogSessions, active: ActiveLog, panel: PanelProvider): vscode.Disposable[] {
  return [
    vscode.commands.registerCommand(COMMANDS.showPanel, () => panel.show(active.editor() ? cursorLine(active) : undefined)),
    vscode.commands.registerCommand(COMMANDS.openTurn, async (uri?: unknown, line?: unknown) => {
      if (typeof uri !== 'string' || typeof line !== 'number') return;
      const s = sessions.get(vscode.Uri.parse(uri));
      if (!s) return;
      active.select(s);
      await panel.show(line);
    }),
    vscode.commands.registerCommand(COMMANDS.nextProblem, () => goToProblem(active, sessions, panel, 1)),
    vscode.commands.registerCommand(COMMANDS.previousProblem, () => goToProblem(active, sessions, panel, -1)),
    vscode.commands.registerCommand(COMMANDS.auditToHtml, async (arg?: unknown) => {
      const uri = arg instanceof vscode.Uri ? arg : active.session?.doc.uri;
      if (!uri) {
        void vscode.window.showInformationMessage('Spillway: open a Spillway log (.jsonl) in the editor first.');
        return;
      }
      try {
        await auditToHtml(uri, sessions);
      } catch (e) {
        void vscode.window.showErrorMessage(`Spillway: the audit report failed: ${e instanceof Error ? e.message : String(e)}`);
      }
    }),
    vscode.commands.registerCommand(COMMANDS.changeOptions, () => changeOptions(active, sessions)),
  ];
}

function cursorLine(active: ActiveLog): number | undefined {
  const s = active.session;
  const e = active.editor();
  if (!s?.log || !e) return undefined;
  const line = e.selection.active.line + 1;
  return recordAtLine(s.log, line) ? line : undefined;
}
