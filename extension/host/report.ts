/**
 * "Audit Log to HTML Report": audits the whole file (streamed from disk, or the editor's unsaved
 * text), renders the core's self-contained HTML report and writes it atomically beside the log.
 */
import * as vscode from 'vscode';
import type { ReadItem } from '../core/log/reader';
import { firstLines } from '../core/view/recognise';
import { auditOptionsFor, withSettingDefaults } from '../core/view/settings';
import { loadEngine, sharedAccountant } from './core';
import { besideWithSuffix, readChunks, writeAtomically } from './fileIO';
import { output } from './output';
import { importOptions, type LogSessions } from './sessions';


async function* withDefaults(items: AsyncIterable<ReadItem> | Iterable<ReadItem>, apply: (r: ReadItem) => ReadItem): AsyncGenerator<ReadItem> {
  for await (const i of items) yield apply(i);
}

export async function auditToHtml(uri: vscode.Uri, sessions: LogSessions): Promise<vscode.Uri | undefined> {
  const { AuditCancelled, auditItems, convertText, detectFormat, encodingForModel, readLog, readLogText, renderHtmlReport, PRIVACY_NOTICE } = loadEngine();
  const settings = sessions.settings;
  const opts = auditOptionsFor(settings, sessions.overrides(uri));
  const file = vscode.workspace.asRelativePath(uri, false);
  const target = besideWithSuffix(uri, 'audit.html');
  const openDoc = vscode.workspace.textDocuments.find((d) => d.uri.toString() === uri.toString());
  let size: number | undefined;
  if (!openDoc?.isDirty) size = (await vscode.workspace.fs.stat(uri)).size;
  const t0 = performance.now();
  const report = await vscode.window.withProgress(
    { location: vscode.ProgressLocation.Notification, title: `Spillway: auditing ${file}`, cancellable: true },
    async (progress, token) => {
      const ac = new AbortController();
      token.onCancellationRequested(() => ac.abort());
      const acct = await sharedAccountant();
      let source: AsyncIterable<ReadItem> | Iterable<ReadItem>;
      const session = sessions.get(uri);
      if (session && session.format !== 'spillway') {
        // Chat / OTLP logs are converted in memory, as in the editor.
        const text = openDoc ? openDoc.getText() : new TextDecoder().decode(await vscode.workspace.fs.readFile(uri));
        const fmt = detectFormat(firstLines(text));
        const conv = convertText(text, fmt === 'otlp' ? 'otlp' : 'chat', importOptions());
        source = [...conv.records, ...conv.issues.map((issue) => ({ issue }))].sort((a, b) => lineOf(a) - lineOf(b));
      } else if (openDoc?.isDirty) {
        // Audit what the user sees; the log on disk is not touched.
        const { records, issues } = readLogText(openDoc.getText(), { maxLineBytes: settings.maxLineLength });
        source = [...records, ...issues.map((issue) => ({ issue }))].sort((a, b) => lineOf(a) - lineOf(b));
      } else source = readLog(readChunks(uri), { maxLineBytes: settings.maxLineLength });
      const apply = (i: ReadItem): ReadItem => ('issue' in i ? i : { ...i, record: withSettingDefaults(i.record, settings, encodingForModel) });
      let lastPct = 0;
      try {
        return await auditItems(withDefaults(source, apply), { ...opts, file }, {
          accountant: acct,
          signal: ac.signal,
          progressEvery: 200,
          onProgress: (done, bytes) => {
            const pct = size && bytes !== undefined ? (100 * bytes) / size : lastPct;
            progress.report({ increment: pct - lastPct, message: `${done.toLocaleString('en-US')} records` });
            lastPct = pct;
          },
        });
      } catch (e) {
        if (e instanceof AuditCancelled || ac.signal.aborted) return undefined;
        throw e;
      }
    },
  );
  if (!report) {
    void vscode.window.showInformationMessage('Spillway: audit cancelled; no report written.');
    return undefined;
  }
  const html = renderHtmlReport(report);
  await writeAtomically(target, new TextEncoder().encode(html));
  const ms = performance.now() - t0;
  output().info(`HTML report for ${file}: ${report.summary.turns} records, ${report.summary.malformed} line problems, ${ms.toFixed(0)} ms → ${target.toString()}`);
  const reveal = 'Reveal in Explorer';
  void vscode.window
    .showInformationMessage(
      `Spillway wrote ${vscode.workspace.asRelativePath(target, false)} (${report.summary.turns.toLocaleString('en-US')} turns). ${PRIVACY_NOTICE}`,
      reveal,
    )
    .then((choice) => {
      if (choice === reveal) void vscode.commands.executeCommand('revealInExplorer', target);
    });
  return target;
}

const lineOf = (i: ReadItem): number => ('issue' in i ? i.issue.line : i.line);
